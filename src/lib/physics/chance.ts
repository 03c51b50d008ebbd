// Chance of meeting a test plan (shared/design/physics.md §7): seeded Monte Carlo over the
// calibration's parameter uncertainty, the error of setting and reading the fill gauge, the rig's
// shot-to-shot speed variation and its impact dispersion.
//
// Each sample draws the fitted, identifiable parameters from N(θ̂, Cov) (multivariate normal by the
// Cholesky factor of Cov; the linearised sampling distribution of a least-squares estimate,
// Bates & Watts 1988, from memory) and a fill-pressure error δp ~ N(0, σ_p) (the gauge is set to
// the sheet's reading, the vessel holds p + δp), and predicts the shot at p + δp through
// predictShot with the drawn parameters: the gauge error reaches the speed through the model's own
// curve (to first order dv/dp·δp, and correctly near a peak of the curve, where dv/dp → 0), and
// moves the impact with the speed. Then:
// - speed: the predicted speed plus the shot-to-shot variation N(0, σ_v) at the muzzle; at the
//   target plane that variation is carried by ∂v_target/∂v_muzzle (computed once, nominal setup);
// - impact: the predicted mean impact plus (N(0, σx), N(0, σy)) lateral and vertical. The
//   dispersion is the rig's measured group spread, which already contains the vertical spread
//   that speed variation causes, so speed noise is not flown a second time. The gauge error is
//   flown: it is this setup's error in setting the fill, which a residual scatter measured at
//   recorded readings holds only in part (where it does, the chance errs on the cautious side).
// The probability is the fraction of samples that meet the requirement; its Monte Carlo standard
// error is √(p(1 − p)/N) (binomial).

import { PhysicsInputError, requireNonNegative, requirePositive } from './errors';
import { choleskySemidefinite } from './fit/linalg';
import {
	parameterValue,
	withParameter,
	predictShot,
	type CalibrationParameters,
	type LauncherCalibration,
	type ParameterName,
	type ShotPrediction,
	type ShotSetup
} from './launcher';
import { createRandom } from './random';

export interface PlanRequirements {
	/** Required speed ± tolerance, m/s, at the muzzle or at the target plane. */
	speed?: { targetMps: number; toleranceMps: number; at: 'muzzle' | 'target' };
	/** Largest allowed distance of the impact from the aim point in the target plane, m. */
	impactRadiusM?: number;
}

export interface ChanceInput {
	calibration: LauncherCalibration;
	setup: ShotSetup;
	plan: PlanRequirements;
	/** The rig's shot-to-shot SD of muzzle speed at one fill reading, m/s. */
	speedSdMps: number;
	/** SD of setting and reading the fill gauge, Pa (0: a perfect gauge). */
	gaugeSdPa: number;
	/** The rig's impact dispersion in the target plane: lateral σx and vertical σy, m. */
	impactSdM: { x: number; y: number };
	/** Monte Carlo samples; default 10 000. */
	samples?: number;
	seed: number;
}

export interface Chance {
	probability: number;
	/** √(p(1 − p)/N). */
	standardError: number;
}

export interface ChanceResult {
	/** Null when the plan sets no speed tolerance. */
	speed: Chance | null;
	/** Null when the plan sets no impact radius. */
	impact: Chance | null;
	/** Both requirements on the same shot; null unless the plan sets both. */
	both: Chance | null;
	samples: number;
	seed: number;
	/** The gauge SD the samples drew from, Pa. */
	gaugeSdPa: number;
	/** Samples whose parameters predicted no shot (stays in the barrel, falls short): counted as misses. */
	failedSamples: number;
	/** The prediction at the calibration's own values. */
	nominal: ShotPrediction;
	notes: string[];
}

const DEFAULT_SAMPLES = 10_000;
const MAX_SAMPLES = 1_000_000;
/** Relative step of the central difference ∂v_target/∂v_muzzle. */
const SPEED_STEP_RELATIVE = 1e-4;

function chance(hits: number, n: number): Chance {
	const p = hits / n;
	return { probability: p, standardError: Math.sqrt((p * (1 - p)) / n) };
}

/** Sensitivity of the target-plane speed to the muzzle speed, by a central difference. */
function targetSpeedPerMuzzleSpeed(calibration: LauncherCalibration, setup: ShotSetup, nominal: ShotPrediction): number {
	const v = nominal.muzzleSpeedMps;
	const h = SPEED_STEP_RELATIVE * v;
	const up = predictShot(calibration, setup, { muzzleSpeedMps: v + h });
	const down = predictShot(calibration, setup, { muzzleSpeedMps: v - h });
	if (!up.ok || !down.ok || !up.impact.reached || !down.impact.reached) return NaN;
	return (up.impact.speedMps - down.impact.speedMps) / (2 * h);
}

/**
 * Probability that one shot of the setup meets the plan's speed tolerance, its impact radius,
 * and both, with Monte Carlo standard errors. Seeded: the same input gives the same answer.
 */
export function chanceOfMeetingPlan(input: ChanceInput): ChanceResult {
	const { calibration, setup, plan } = input;
	const samples = input.samples ?? DEFAULT_SAMPLES;
	if (!Number.isInteger(samples) || samples < 1 || samples > MAX_SAMPLES)
		throw new PhysicsInputError('samples', 'out-of-range', `samples must be a whole number in [1, ${MAX_SAMPLES}]`);
	const speedSd = requireNonNegative(input.speedSdMps, 'speedSdMps');
	const gaugeSd = requireNonNegative(input.gaugeSdPa, 'gaugeSdPa');
	const sdX = requireNonNegative(input.impactSdM.x, 'impactSdM.x');
	const sdY = requireNonNegative(input.impactSdM.y, 'impactSdM.y');
	if (plan.speed) {
		requirePositive(plan.speed.targetMps, 'plan.speed.targetMps');
		requireNonNegative(plan.speed.toleranceMps, 'plan.speed.toleranceMps');
	}
	const radius = plan.impactRadiusM === undefined ? null : requireNonNegative(plan.impactRadiusM, 'plan.impactRadiusM');

	const nominal = predictShot(calibration, setup);
	if (!nominal.ok) throw new PhysicsInputError('setup', 'out-of-range', nominal.reason);
	const notes = [...nominal.warnings];

	// Parameters drawn: fitted and identifiable; the others stay at their values.
	const drawn = calibration.fitted
		.map((name, j) => ({ name, j }))
		.filter(({ j }) => calibration.identifiable[j]);
	calibration.fitted.forEach((name, j) => {
		if (!calibration.identifiable[j])
			notes.push(`${name} was not determined by the calibration: its uncertainty is left out, so the chances are optimistic`);
	});
	const mean = drawn.map(({ name }) => parameterValue(calibration.parameters, name));
	const factor = choleskySemidefinite(drawn.map(({ j }) => drawn.map(({ j: k }) => calibration.covariance[j][k])));

	const atTarget = plan.speed?.at === 'target';
	const speedGain = atTarget ? targetSpeedPerMuzzleSpeed(calibration, setup, nominal) : 1;
	if (atTarget && !Number.isFinite(speedGain))
		throw new PhysicsInputError('setup', 'out-of-range', 'the nominal shot does not reach the target plane');

	const random = createRandom(input.seed);
	const z = new Array<number>(drawn.length);
	let speedHits = 0;
	let impactHits = 0;
	let bothHits = 0;
	let failedSamples = 0;
	for (let s = 0; s < samples; s++) {
		for (let i = 0; i < z.length; i++) z[i] = random.normal(0, 1);
		let parameters = calibration.parameters;
		drawn.forEach(({ name }, i) => {
			let v = mean[i];
			for (let k = 0; k <= i; k++) v += factor[i][k] * z[k];
			parameters = withParameter(parameters, name, v);
		});
		const fillGaugePa = setup.fillGaugePa + random.normal(0, gaugeSd);
		const shotNoise = random.normal(0, speedSd);
		const dx = random.normal(0, sdX);
		const dy = random.normal(0, sdY);
		let predicted: ReturnType<typeof predictShot>;
		try {
			predicted =
				fillGaugePa < 0
					? { ok: false, reason: 'the drawn fill pressure is below ambient' }
					: predictShot({ ...calibration, parameters }, { ...setup, fillGaugePa });
		} catch (e) {
			if (!(e instanceof PhysicsInputError)) throw e;
			predicted = { ok: false, reason: e.message };
		}
		if (!predicted.ok) {
			failedSamples++;
			continue;
		}
		let speedOk = true;
		if (plan.speed) {
			const v = atTarget
				? predicted.impact.reached
					? predicted.impact.speedMps + speedGain * shotNoise
					: NaN
				: predicted.muzzleSpeedMps + shotNoise;
			speedOk = Math.abs(v - plan.speed.targetMps) <= plan.speed.toleranceMps;
		}
		let impactOk = true;
		if (radius !== null) {
			const y = predicted.impact.heightM + dy;
			const x = predicted.impact.lateralM + dx;
			impactOk = predicted.impact.reached && x * x + y * y <= radius * radius;
		}
		if (plan.speed && speedOk) speedHits++;
		if (radius !== null && impactOk) impactHits++;
		if (speedOk && impactOk) bothHits++;
	}
	if (failedSamples > 0)
		notes.push(`${failedSamples} of ${samples} draws (parameters and gauge error) predicted no shot; they count as misses`);
	return {
		speed: plan.speed ? chance(speedHits, samples) : null,
		impact: radius !== null ? chance(impactHits, samples) : null,
		both: plan.speed && radius !== null ? chance(bothHits, samples) : null,
		samples,
		seed: input.seed,
		gaugeSdPa: gaugeSd,
		failedSamples,
		nominal,
		notes
	};
}
