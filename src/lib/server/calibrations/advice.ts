// Plain words for the calibration pages (issue 8): what each parameter is, what data would
// determine one the shots could not, and whether the fit predicts shots it has not seen
// (physics.md §5: the cross-validated error beside the in-sample RMS and the noise floor). Pure.
import type { Quantity } from '$lib/physics/units';
import type { CalibrationSummary, StoredParameterKey } from '../reconcile';

export type ResidualKindKey = 'muzzleSpeed' | 'downrangeSpeed' | 'impactHeight';
export const RESIDUAL_KINDS: ResidualKindKey[] = ['muzzleSpeed', 'downrangeSpeed', 'impactHeight'];

export const KIND_INFO: Record<ResidualKindKey, { label: string; quantity: Quantity; small: boolean }> = {
	muzzleSpeed: { label: 'Muzzle speed', quantity: 'speed', small: false },
	downrangeSpeed: { label: 'Downrange speed', quantity: 'speed', small: false },
	impactHeight: { label: 'Impact height', quantity: 'length', small: true }
};

export interface ParameterInfo {
	label: string;
	symbol: string;
	/** Null for a pure number; else the quantity its value is shown in (user units). */
	quantity: Quantity | null;
	/** What it means on the range. */
	meaning: string;
}

export const PARAMETER_INFO: Record<StoredParameterKey, ParameterInfo> = {
	eta0: { label: 'Efficiency', symbol: 'η0', quantity: null, meaning: 'share of the ideal gas work that reaches the projectile' },
	eta1: { label: 'Pressure slope of the efficiency', symbol: 'η1', quantity: null, meaning: 'change of η per relative change of fill pressure from p_ref' },
	energyOffsetJ: { label: 'Energy term (J)', symbol: 'E', quantity: null, meaning: 'energy offset in J: positive is friction-like loss, negative means the simple expansion under-states the work' },
	valveAreaM2: { label: 'Valve area (m²)', symbol: 'C·A_v', quantity: null, meaning: 'effective flow area of the open valve, m²' },
	openingTimeS: { label: 'Valve opening time (s)', symbol: 'τ', quantity: null, meaning: 'time the valve takes to open fully, s' },
	frictionN: { label: 'Friction', symbol: 'F', quantity: 'force', meaning: 'constant friction on the projectile in the bore' },
	dragCoefficient: { label: 'Drag coefficient', symbol: 'C_D', quantity: null, meaning: 'quadratic drag of the projectile in flight' },
	elevationBiasDeg: { label: 'Elevation bias', symbol: 'δθ', quantity: 'angle', meaning: 'difference between the set and the actual launch elevation' }
};

export const STORED_KEYS: StoredParameterKey[] = ['eta0', 'eta1', 'energyOffsetJ', 'valveAreaM2', 'openingTimeS', 'frictionN', 'dragCoefficient', 'elevationBiasDeg'];

/** What the chosen shots offer, for advice on what is missing. */
export interface DataOffered {
	downrangeSpeeds: number;
	impactHeights: number;
	/** Fill pressures of the fitted shots, already in words (user units), e.g. "1.42 bar to 1.44 bar". */
	fillRangeText: string;
	distinctFills: number;
}

/** What data would determine a parameter the shots could not (shown beside "not determined"). */
export function adviceFor(key: StoredParameterKey, data: DataOffered): string {
	switch (key) {
		case 'dragCoefficient':
			return data.downrangeSpeeds === 0
				? 'Add downrange speeds: a second chronograph at a known distance measures the speed the projectile loses to drag. Impacts at a longer target distance help too.'
				: 'The speed lost between the chronographs is too small to measure the drag: put the second chronograph farther downrange, or add impacts at a longer target distance.';
		case 'eta1':
		case 'energyOffsetJ':
		case 'openingTimeS':
		case 'frictionN':
			return data.distinctFills < 2
				? `Every shot was filled to the same pressure (${data.fillRangeText}). Fire a sweep over a wider range of fill pressures — from about half to the full working pressure — to tell this term from η0.`
				: `The fill pressures span only ${data.fillRangeText}. Widen the pressure range of the sweep to tell this term from η0.`;
		case 'elevationBiasDeg':
			return data.impactHeights === 0
				? 'Log impact heights on the target face (hits, measured from the aim point).'
				: 'Add more measured impacts, or impacts at a longer distance, where the elevation moves the impact more.';
		default:
			return 'Measured muzzle speeds at known fill pressures determine the efficiency.';
	}
}

/**
 * How far the held-out error may sit above the noise floor. Up to ×1.5 the model predicts new shots
 * about as well as the instruments allow; beyond ×3 the misfit dominates the measurement noise,
 * a sign the model family is too simple (physics.md §5). The thresholds are judgement, not theory.
 */
export const CV_GOOD_RATIO = 1.5;
export const CV_POOR_RATIO = 3;

export type Verdict = { level: 'good' | 'watch' | 'poor' | 'none'; text: string; worstRatio: number | null };

/** Whether the calibration predicts shots it has not seen, in plain words. */
export function crossValidationVerdict(
	summary: Pick<CalibrationSummary, 'crossValidation' | 'noiseFloorByKind' | 'covarianceParameters' | 'model' | 'comparison'>
): Verdict {
	const cv = summary.crossValidation;
	if (!cv) return { level: 'none', text: 'Not cross-validated: it needs at least two sessions, or enough shots for held-out folds.', worstRatio: null };
	const ratios = RESIDUAL_KINDS.flatMap((kind) => {
		const held = cv.rmsByKind[kind];
		const floor = summary.noiseFloorByKind[kind];
		return held !== null && floor !== null && floor > 0 ? [held / floor] : [];
	});
	if (ratios.length === 0)
		return {
			level: 'none',
			text: `Cross-validation (${cv.method === 'leave-one-session-out' ? 'leaving one session out' : `${cv.folds}-fold`}) could not predict the held-out shots: ${cv.failedFolds} of ${cv.folds} folds failed. Judge the fit on more sessions.`,
			worstRatio: null
		};
	const worst = Math.max(...ratios);
	const how = cv.method === 'leave-one-session-out' ? 'each session predicted from the others' : `${cv.folds}-fold`;
	if (worst <= CV_GOOD_RATIO)
		return { level: 'good', text: `Predicts unseen shots about as well as the instruments allow (${how}; held-out error at most ${worst.toFixed(1)} × the noise floor).`, worstRatio: worst };
	// The richer model to try depends on what was fitted: the valve-flow family and the pressure
	// slope are the two ways the speed–pressure curve can bend more than the plain gas-work one.
	const richer =
		summary.model?.family === 'valve-flow' || summary.covarianceParameters.includes('eta1')
			? ''
			: summary.comparison
				? 'Compare it with the valve-flow model in the table above, '
				: 'Try the automatic model choice (it compares the valve-flow model and the pressure slope η1), ';
	const suggestion = `${richer}${richer ? 'calibrate' : 'Calibrate'} over a narrower pressure range, or look for a change of the rig between sessions (seal wear, a leak).`;
	if (worst <= CV_POOR_RATIO)
		return { level: 'watch', text: `Held-out error is ${worst.toFixed(1)} × the noise floor (${how}): usable, but the model misses some of what changes between shots. ${suggestion}`, worstRatio: worst };
	return {
		level: 'poor',
		text: `Held-out error is ${worst.toFixed(1)} × the noise floor (${how}): the model family is too simple for these shots. ${suggestion}`,
		worstRatio: worst
	};
}
