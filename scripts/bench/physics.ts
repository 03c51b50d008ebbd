// Physics benchmark (npm run bench:physics): flights per second of flyToPlane over the reference
// cases of shared/reference/flights.json at the default (required) accuracy, checked against those
// references while it runs, and the time per setup solve (fill pressure, elevation). Target: at
// least 50 000 flights/s on one core. Prints a markdown table for the README.

import { readFileSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import {
	DEFAULT_ABSOLUTE_TOLERANCE,
	DEFAULT_RELATIVE_TOLERANCE,
	flyToPlane,
	solveElevation,
	solveFillPressure,
	type FlightInput,
	type LauncherInput
} from '../../src/lib/physics/index.ts';

/** Wall time of the flight measurement, ms, cut into windows to show the spread of a busy machine. */
const FLIGHT_RUN_MS = 2500;
const WINDOW_MS = 100;
/** Wall time per setup-solve measurement, ms. */
const SOLVE_RUN_MS = 400;
const WARM_UP_MS = 300;
/** Accuracy required by shared/design/physics.md §3. */
const TOLERANCE = { m: 1e-6, s: 1e-7, mps: 1e-6 };

interface ReferenceCase {
	input: FlightInput;
	expected: { timeS: number; heightM: number; lateralM: number; speedMps: number };
}

const flightsJson = fileURLToPath(new URL('../../../shared/reference/flights.json', import.meta.url));
const cases: ReferenceCase[] = JSON.parse(readFileSync(flightsJson, 'utf8')).cases;

function worstErrors(): { m: number; s: number; mps: number } {
	const worst = { m: 0, s: 0, mps: 0 };
	for (const c of cases) {
		const r = flyToPlane(c.input);
		worst.s = Math.max(worst.s, Math.abs(r.timeS - c.expected.timeS));
		worst.m = Math.max(worst.m, Math.abs(r.heightM - c.expected.heightM), Math.abs(r.lateralM - c.expected.lateralM));
		worst.mps = Math.max(worst.mps, Math.abs(r.speedMps - c.expected.speedMps));
	}
	return worst;
}

interface FlightRates {
	/** Flights per second of wall time over the whole run. */
	overall: number;
	/** The same over the best WINDOW_MS window (the machine at its least busy). */
	bestWindow: number;
	/** Flights per second of this process's CPU time: the one-core figure on a shared machine. */
	perCpuSecond: number;
	steps: number;
	evaluations: number;
}

function measureFlights(runMs: number): FlightRates {
	let flights = 0;
	let steps = 0;
	let evaluations = 0;
	let bestWindow = 0;
	const cpuStart = process.cpuUsage();
	const start = performance.now();
	while (performance.now() - start < runMs) {
		const windowStart = performance.now();
		let inWindow = 0;
		while (performance.now() - windowStart < WINDOW_MS) {
			for (const c of cases) {
				const r = flyToPlane(c.input);
				steps += r.steps;
				evaluations += r.evaluations;
				inWindow++;
			}
		}
		flights += inWindow;
		bestWindow = Math.max(bestWindow, inWindow / ((performance.now() - windowStart) / 1000));
	}
	const seconds = (performance.now() - start) / 1000;
	const cpu = process.cpuUsage(cpuStart);
	return {
		overall: flights / seconds,
		bestWindow,
		perCpuSecond: flights / ((cpu.user + cpu.system) / 1e6),
		steps: steps / flights,
		evaluations: evaluations / flights
	};
}

/** Mean wall time of one call, ms. */
function timePerCall(call: () => unknown, runMs: number): number {
	let calls = 0;
	const start = performance.now();
	while (performance.now() - start < runMs) {
		call();
		calls++;
	}
	return (performance.now() - start) / calls;
}

// The launcher of reference sheet §1 with η = 0.6, and a 30 m shot at a target.
const LAUNCHER: LauncherInput = {
	ambientPa: 101325,
	reservoirM3: 1e-3,
	deadM3: 0,
	boreDiameterM: 0.025,
	travelM: 1,
	massKg: 0.02,
	efficiency: 0.6
};
const SHOT = { elevationDeg: 1, launchHeightM: 1.5, targetDistanceM: 30, diameterM: 0.025, dragCoefficient: 0.5, airDensityKgM3: 1.2 };
const RATED_PA = 8e5;

function expectOk(r: { ok: boolean }, what: string): void {
	if (!r.ok) throw new Error(`${what} failed: ${JSON.stringify(r)}`);
}

const solves: [string, () => { ok: boolean }][] = [
	[
		'solveFillPressure at the muzzle, constant η (closed form)',
		() => solveFillPressure({ ...LAUNCHER, at: 'muzzle', requiredSpeedMps: 95, ratedPressurePa: RATED_PA })
	],
	[
		'solveFillPressure at the muzzle, η with pressure slope (scan + Brent)',
		() =>
			solveFillPressure({
				...LAUNCHER,
				efficiency: { eta0: 0.62, eta1: -0.05, pRefPa: 4e5 },
				at: 'muzzle',
				requiredSpeedMps: 95,
				ratedPressurePa: RATED_PA
			})
	],
	[
		'solveFillPressure at a target 30 m downrange (each trial is a flight)',
		() => solveFillPressure({ ...LAUNCHER, at: 'target', shot: SHOT, requiredSpeedMps: 80, ratedPressurePa: RATED_PA })
	],
	[
		'solveElevation, low arc to an aim height at 30 m',
		() =>
			solveElevation({
				speedMps: 80,
				launchHeightM: 1.5,
				targetDistanceM: 30,
				massKg: 0.02,
				diameterM: 0.025,
				dragCoefficient: 0.5,
				airDensityKgM3: 1.2,
				aimHeightM: 1.5
			})
	]
];

function formatTime(ms: number): string {
	return ms >= 1 ? `${ms.toFixed(2)} ms` : `${(ms * 1000).toFixed(1)} µs`;
}

const group = (n: number) => Math.round(n).toLocaleString('en-US').replace(/,/g, ' ');

measureFlights(WARM_UP_MS);
for (const [what, solve] of solves) expectOk(solve(), what);
const accuracy = worstErrors();
const withinTolerance = accuracy.m < TOLERANCE.m && accuracy.s < TOLERANCE.s && accuracy.mps < TOLERANCE.mps;
const flights = measureFlights(FLIGHT_RUN_MS);
const solveTimes = solves.map(([what, solve]) => [what, timePerCall(solve, SOLVE_RUN_MS)] as const);

const rows: [string, string][] = [
	[
		`flyToPlane over the ${cases.length} reference cases (DOP853, rtol ${DEFAULT_RELATIVE_TOLERANCE}, atol ${DEFAULT_ABSOLUTE_TOLERANCE})`,
		`**${group(flights.overall)} flights/s** wall clock (best ${WINDOW_MS} ms window ${group(flights.bestWindow)}/s; ` +
			`${group(flights.perCpuSecond)} per CPU-second)`
	],
	[
		'worst error against flights.json (limits 1e-6 m, 1e-7 s, 1e-6 m/s)',
		`${accuracy.m.toExponential(1)} m, ${accuracy.s.toExponential(1)} s, ${accuracy.mps.toExponential(1)} m/s${withinTolerance ? '' : ' — OUT OF TOLERANCE'}`
	],
	['work per flight', `${flights.steps.toFixed(1)} steps, ${flights.evaluations.toFixed(0)} evaluations of the equations of motion`],
	...solveTimes.map(([what, ms]) => [what, formatTime(ms)] as [string, string])
];

console.log(
	`Shotwright physics benchmark — Node ${process.version}, ${availableParallelism()} CPUs, one thread, ` +
		`load average ${loadavg()[0].toFixed(2)}\n`
);
console.log('| Measure | Result |');
console.log('|---|---|');
for (const [measure, value] of rows) console.log(`| ${measure} | ${value} |`);
if (!withinTolerance) process.exitCode = 1;
