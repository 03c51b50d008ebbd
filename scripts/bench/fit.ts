// Calibration-fit benchmark (npm run bench:fit): a joint η0 + C_D + δθ fit over 10 000 shots
// (muzzle speeds and impacts, a quarter with downrange speeds; target < 3 s on the 2-core
// reference machine) and fits per second for 100-shot campaigns. Data come from known parameters
// through the same prediction path as the fit (simulateCampaign), so each fit is also checked
// against the truth. Prints a markdown table.

import {
	compareModels,
	fitLauncher,
	neutralParameters,
	valveFlowMuzzleSpeed,
	type CalibrationShot,
	type LauncherFitResult,
	type MeasurementSds
} from '../../src/lib/physics/launcher';
import { simulateCampaign, type SyntheticCampaign } from '../../src/lib/physics/launcher/synthetic';

const TRUTH = { ...neutralParameters(5e5), efficiency: 0.62, dragCoefficient: 0.5, elevationBiasDeg: 0.3 };
const NOISE: MeasurementSds = { speedMps: 0.3, pressurePa: 2000, impactM: 0.01 };
const LARGE_SESSIONS = 20;
const LARGE_SHOTS_PER_SESSION = 500;
const SMALL_CAMPAIGNS = 40;
const SMALL_SHOTS = 100;
const DOWNRANGE_EVERY = 4;

function campaign(sessions: number, shotsPerSession: number, seed: number): CalibrationShot[] {
	const spec: SyntheticCampaign = {
		truth: TRUTH,
		rig: { reservoirM3: 1e-3, deadM3: 2e-5, boreDiameterM: 0.025, travelM: 1 },
		projectile: { massKg: 0.02, diameterM: 0.025 },
		sessions: Array.from({ length: sessions }, (_, i) => ({
			sessionId: `day-${i + 1}`,
			targetDistanceM: 30,
			elevationDeg: 4,
			launchHeightM: 1.5,
			aimHeightM: 2,
			airDensityKgM3: 1.15 + (0.1 * i) / Math.max(1, sessions - 1),
			ambientPa: 101325 - 300 * (i % 5),
			wind: { xMps: -1 + 0.1 * (i % 20), zMps: 0.5 }
		})),
		fillPressuresPa: [3e5, 4e5, 5e5, 6e5, 7e5],
		shotsPerSession,
		noise: NOISE,
		measure: { muzzleSpeed: true, downrangeDistanceM: 20, impactHeight: true },
		seed
	};
	return simulateCampaign(spec).map((shot, i) => (i % DOWNRANGE_EVERY === 0 ? shot : { ...shot, downrange: undefined }));
}

function timed<T>(run: () => T): { value: T; ms: number } {
	const t0 = performance.now();
	const value = run();
	return { value, ms: performance.now() - t0 };
}

function recovered(fit: LauncherFitResult): string {
	const z = fit.parameters.map((p) => {
		const truth =
			p.name === 'efficiency' ? TRUTH.efficiency : p.name === 'dragCoefficient' ? TRUTH.dragCoefficient : TRUTH.elevationBiasDeg;
		return Math.abs(p.value - truth) / p.standardError;
	});
	return `max error/SE ${Math.max(...z).toFixed(2)}`;
}

const options = { elevationBias: true } as const;
// Warm-up so the timings measure compiled code.
fitLauncher(campaign(2, 50, 99), NOISE, options);

const large = campaign(LARGE_SESSIONS, LARGE_SHOTS_PER_SESSION, 1);
const fitLarge = timed(() => fitLauncher(large, NOISE, { ...options, crossValidation: false }));
const fitLargeCv = timed(() => fitLauncher(large, NOISE, { ...options, crossValidation: 5 }));

const small = Array.from({ length: SMALL_CAMPAIGNS }, (_, i) => campaign(2, SMALL_SHOTS / 2, 1000 + i));
const smallFits = timed(() => small.map((shots) => fitLauncher(shots, NOISE, { ...options, crossValidation: false })));
const smallFitsCv = timed(() => small.map((shots) => fitLauncher(shots, NOISE, options)));

// Model comparison on a 1 000-shot sweep (issue 13: every family, 5-fold CV, target < 5 s): one
// session of a 35 mm ice ball launcher, truth from the valve-flow family with sphere drag.
const ICE_RIG = { reservoirM3: 0.003, deadM3: 5e-5, boreDiameterM: 0.0362, travelM: 1.5 };
const ICE_BALL = { massKg: 0.02059, diameterM: 0.035 };
const ICE_SESSION = {
	sessionId: 'sweep',
	targetDistanceM: 6,
	elevationDeg: 1.5,
	launchHeightM: 1.1,
	aimHeightM: 1.2,
	airDensityKgM3: 1.2596,
	ambientPa: 100400,
	temperatureC: 4,
	wind: { xMps: 0, zMps: 0 }
};
const sweep = simulateCampaign({
	truth: { ...neutralParameters(1e5), valveAreaM2: 2.1e-4, openingTimeS: 0.015, frictionN: 1.5, dragCoefficient: 1, elevationBiasDeg: -0.01 },
	model: { family: 'valve-flow', drag: 'sphere' },
	rig: ICE_RIG,
	projectile: ICE_BALL,
	sessions: [ICE_SESSION],
	fillPressuresPa: Array.from({ length: 1000 }, (_, i) => 60e3 + ((i * 7919) % 1000) * 140),
	shotsPerSession: 1000,
	noise: { speedMps: 0.25, pressurePa: 1500, impactM: 0.006 },
	measure: { muzzleSpeed: true, downrangeDistanceM: 5, impactHeight: true },
	seed: 7
});
const comparison = timed(() => compareModels(sweep, { speedMps: 0.25, pressurePa: 1500, impactM: 0.006 }, { sphere: true, crossValidation: 5 }));

// Valve-flow muzzle speed, one ODE per call, over the sweep's pressures.
const VALVE = { ...ICE_RIG, massKg: ICE_BALL.massKg, ambientPa: 100400, temperatureK: 277.15, valveAreaM2: 2.1e-4, openingTimeS: 0.015, frictionN: 1.5 };
const VALVE_CALLS = 5000;
const valve = timed(() => {
	let sum = 0;
	for (let i = 0; i < VALVE_CALLS; i++) {
		const r = valveFlowMuzzleSpeed({ ...VALVE, fillGaugePa: 60e3 + (i % 1000) * 140 }, { relativeTolerance: 1e-8, absoluteTolerance: 1e-8 });
		if (r.ok) sum += r.speedMps;
	}
	return sum;
});

const rows = [
	['case', 'time', 'rate', 'notes'],
	['---', '---:', '---:', '---'],
	[
		`joint η0 + C_D + δθ, ${large.length} shots (${large.length} muzzle speeds, ${large.length} impacts, ${large.length / DOWNRANGE_EVERY} downrange speeds)`,
		`${(fitLarge.ms / 1000).toFixed(2)} s`,
		'',
		`${fitLarge.value.passes} pass(es), ${fitLarge.value.iterations} LM iterations; ${recovered(fitLarge.value)}; converged ${fitLarge.value.converged}`
	],
	[
		`same, with 5-fold cross-validation`,
		`${(fitLargeCv.ms / 1000).toFixed(2)} s`,
		'',
		`CV RMS muzzle ${fitLargeCv.value.crossValidation?.rmsByKind.muzzleSpeed?.toFixed(3)} m/s, impact ${fitLargeCv.value.crossValidation?.rmsByKind.impactHeight?.toFixed(4)} m`
	],
	[
		`${SMALL_CAMPAIGNS} campaigns of ${SMALL_SHOTS} shots, no cross-validation`,
		`${(smallFits.ms / SMALL_CAMPAIGNS).toFixed(1)} ms/fit`,
		`${((1000 * SMALL_CAMPAIGNS) / smallFits.ms).toFixed(1)} fits/s`,
		`all converged: ${smallFits.value.every((f) => f.converged)}`
	],
	[
		`${SMALL_CAMPAIGNS} campaigns of ${SMALL_SHOTS} shots, leave-one-session-out CV (2 sessions)`,
		`${(smallFitsCv.ms / SMALL_CAMPAIGNS).toFixed(1)} ms/fit`,
		`${((1000 * SMALL_CAMPAIGNS) / smallFitsCv.ms).toFixed(1)} fits/s`,
		`all converged: ${smallFitsCv.value.every((f) => f.converged)}`
	]
	,
	[
		`model comparison, ${sweep.length}-shot sweep, ${comparison.value.comparison.candidates.length} candidates (gas work ×3, valve flow; constant and sphere drag), 5-fold CV each`,
		`${(comparison.ms / 1000).toFixed(2)} s`,
		'',
		`proposed: ${comparison.value.comparison.proposed} (target < 5 s)`
	],
	[
		`valve-flow muzzle speed (ODE, tolerance 1e-8), ${VALVE_CALLS} calls over 60–200 kPa`,
		`${((1000 * valve.ms) / VALVE_CALLS).toFixed(1)} µs/shot`,
		`${((1000 * VALVE_CALLS) / valve.ms).toFixed(0)} shots/s`,
		'target < 200 µs per shot'
	]
];
console.log(rows.map((r) => `| ${r.join(' | ')} |`).join('\n'));
