// Model choice by held-out error (physics.md §5): fit each candidate model, cross-validate each,
// and propose the one that predicts unseen shots best — the simpler one when within
// SIMPLER_WITHIN of the best. An analyst may choose another; a lead approves.
//
// Candidates: gas work η0; η0 + E; η0 + η1 + E; valve flow (C·A_v, τ, F); each with the drag laws
// the data can support (a constant C_D; the sphere correlation times a factor when the
// projectile is a sphere), and an elevation bias when the shots carry impact heights.
// Held-out RMS per kind is put on one scale by dividing by that kind's noise floor (the smallest
// in-sample floor among the candidates, so a model cannot look better by claiming a steeper
// speed–pressure curve and with it a larger floor), and the kinds are pooled by their counts.

import { PhysicsInputError } from '../errors';
import { fitLauncher, type CalibrationShot, type FitLauncherOptions, type LauncherFitResult, type MeasurementSds, type PerKind } from './fit';
import { OBSERVATION_KINDS, type DragLaw, type LauncherFamily, type LauncherModel } from './model';

/** physics.md §5: the simpler candidate is proposed when its held-out score is within 5 %. */
export const SIMPLER_WITHIN = 0.05;

export type CandidateKey = string;

export interface Candidate {
	key: CandidateKey;
	label: string;
	model: LauncherModel;
	terms: { pressureSlope: boolean; energyOffset: boolean; elevationBias: boolean; drag: boolean };
	/** Number of fitted parameters (for "the simpler one"). */
	size: number;
}

export interface CandidateOutcome {
	key: CandidateKey;
	label: string;
	model: LauncherModel;
	terms: Candidate['terms'];
	size: number;
	converged: boolean;
	message: string;
	/** In-sample RMS per kind. */
	rmsByKind: PerKind;
	/** Cross-validated RMS per kind (null when it could not be computed). */
	heldOutRmsByKind: PerKind;
	/** Held-out RMS ÷ noise floor per kind. */
	heldOutRatioByKind: PerKind;
	/** Pooled held-out score (1 = at the noise floor); Infinity when it failed. */
	score: number;
	failedFolds: number;
}

export interface ModelComparison {
	method: 'leave-one-session-out' | 'k-fold' | null;
	folds: number;
	/** The floors the ratios are taken against. */
	noiseFloorByKind: PerKind;
	candidates: CandidateOutcome[];
	proposed: CandidateKey | null;
	/** Why it was proposed, in plain words. */
	reason: string;
}

const FAMILY_LABEL: Record<LauncherFamily, string> = { 'gas-work': 'gas work', 'valve-flow': 'valve flow' };

function label(c: Omit<Candidate, 'label' | 'key' | 'size'>): string {
	const parts: string[] = [];
	if (c.model.family === 'gas-work') {
		parts.push(['η0', c.terms.pressureSlope ? 'η1' : null, c.terms.energyOffset ? 'E' : null].filter(Boolean).join(' + '));
	} else parts.push('C·A_v + τ + F');
	if (c.terms.drag) parts.push(c.model.drag === 'sphere' ? 'sphere drag × factor' : 'constant C_D');
	if (c.terms.elevationBias) parts.push('δθ');
	return `${FAMILY_LABEL[c.model.family]}: ${parts.join(', ')}`;
}

export function candidateKey(model: LauncherModel, terms: Candidate['terms']): CandidateKey {
	const inner = model.family === 'gas-work' ? ['eta0', terms.pressureSlope ? 'eta1' : '', terms.energyOffset ? 'E' : ''].filter(Boolean).join('+') : 'valve';
	return `${model.family}:${inner}:${terms.drag ? model.drag : 'nodrag'}${terms.elevationBias ? ':bias' : ''}`;
}

/** The candidates the shots can support. */
export function candidateModels(shots: readonly CalibrationShot[], options: { sphere: boolean }): Candidate[] {
	const hasFlight = shots.some((s) => s.downrange || s.impactHeightM !== undefined);
	const hasImpacts = shots.some((s) => s.impactHeightM !== undefined);
	const laws: DragLaw[] = hasFlight ? (options.sphere ? ['constant', 'sphere'] : ['constant']) : ['constant'];
	const internal: { family: LauncherFamily; pressureSlope: boolean; energyOffset: boolean; size: number }[] = [
		{ family: 'gas-work', pressureSlope: false, energyOffset: false, size: 1 },
		{ family: 'gas-work', pressureSlope: false, energyOffset: true, size: 2 },
		{ family: 'gas-work', pressureSlope: true, energyOffset: true, size: 3 },
		{ family: 'valve-flow', pressureSlope: false, energyOffset: false, size: 3 }
	];
	const out: Candidate[] = [];
	for (const i of internal)
		for (const drag of laws) {
			const model = { family: i.family, drag };
			const terms = { pressureSlope: i.pressureSlope, energyOffset: i.energyOffset, elevationBias: hasImpacts, drag: hasFlight };
			const size = i.size + (hasFlight ? 1 : 0) + (hasImpacts ? 1 : 0);
			out.push({ key: candidateKey(model, terms), label: label({ model, terms }), model, terms, size });
		}
	return out;
}

export function optionsOf(c: Pick<Candidate, 'model' | 'terms'>): FitLauncherOptions {
	return {
		model: c.model,
		pressureSlope: c.terms.pressureSlope,
		energyOffset: c.terms.energyOffset,
		dragCoefficient: c.terms.drag,
		elevationBias: c.terms.elevationBias
	};
}

export interface CompareOptions {
	/** Offer the sphere drag correlation (the projectile is a sphere). */
	sphere: boolean;
	crossValidation?: 'auto' | number;
	/** Fit only these candidates (keys); default all the data support. */
	only?: CandidateKey[];
}

export interface ComparisonResult {
	comparison: ModelComparison;
	/** Each candidate's fit (absent when it threw on its input). */
	fits: Map<CandidateKey, LauncherFitResult>;
	proposed: LauncherFitResult | null;
}

/** Fit and cross-validate every candidate; propose the best (the simpler within 5 %). */
export function compareModels(shots: CalibrationShot[], sds: MeasurementSds, options: CompareOptions): ComparisonResult {
	const candidates = candidateModels(shots, { sphere: options.sphere }).filter((c) => !options.only || options.only.includes(c.key));
	if (candidates.length === 0) throw new PhysicsInputError('model', 'out-of-range', 'no candidate model fits these shots');
	const fits = new Map<CandidateKey, LauncherFitResult>();
	const errors = new Map<CandidateKey, string>();
	for (const c of candidates) {
		try {
			fits.set(c.key, fitLauncher(shots, sds, { ...optionsOf(c), crossValidation: options.crossValidation ?? 'auto' }));
		} catch (e) {
			if (!(e instanceof PhysicsInputError)) throw e;
			errors.set(c.key, e.message);
		}
	}
	const floor = Object.fromEntries(
		OBSERVATION_KINDS.map((kind) => {
			const values = [...fits.values()].map((f) => f.noiseFloorByKind[kind]).filter((v): v is number => v !== null && v > 0);
			return [kind, values.length ? Math.min(...values) : null];
		})
	) as PerKind;
	const outcomes: CandidateOutcome[] = candidates.map((c) => {
		const fit = fits.get(c.key);
		const cv = fit?.crossValidation ?? null;
		const heldOut = (cv?.rmsByKind ?? { muzzleSpeed: null, downrangeSpeed: null, impactHeight: null }) as PerKind;
		const ratio = Object.fromEntries(
			OBSERVATION_KINDS.map((k) => [k, heldOut[k] !== null && floor[k] ? heldOut[k]! / floor[k]! : null])
		) as PerKind;
		let score = Infinity;
		if (fit?.converged && cv && cv.failedFolds === 0 && cv.unpredicted === 0) {
			let sum = 0;
			let n = 0;
			for (const k of OBSERVATION_KINDS) {
				const count = fit.nUsed[k];
				if (count === 0) continue;
				if (ratio[k] === null) {
					sum = Infinity;
					break;
				}
				sum += count * ratio[k]! ** 2;
				n += count;
			}
			score = n > 0 ? Math.sqrt(sum / n) : Infinity;
		}
		return {
			key: c.key,
			label: c.label,
			model: c.model,
			terms: c.terms,
			size: c.size,
			converged: fit?.converged ?? false,
			message: fit?.message ?? errors.get(c.key) ?? 'not fitted',
			rmsByKind: fit?.rmsByKind ?? { muzzleSpeed: null, downrangeSpeed: null, impactHeight: null },
			heldOutRmsByKind: heldOut,
			heldOutRatioByKind: ratio,
			score,
			failedFolds: cv?.failedFolds ?? 0
		};
	});
	const ranked = outcomes.filter((o) => Number.isFinite(o.score));
	let proposed: CandidateOutcome | null = null;
	let reason: string;
	if (ranked.length === 0) {
		const fallback = outcomes.filter((o) => o.converged).sort((a, b) => a.size - b.size)[0] ?? null;
		proposed = fallback;
		reason = fallback
			? 'No candidate could be cross-validated (too few shots or sessions); the simplest model that fitted is proposed.'
			: 'No candidate model could be fitted to these shots.';
	} else {
		const best = ranked.reduce((a, b) => (b.score < a.score ? b : a));
		const simpler = ranked
			.filter((o) => o.score <= best.score * (1 + SIMPLER_WITHIN))
			.sort((a, b) => a.size - b.size || a.score - b.score)[0];
		proposed = simpler;
		reason =
			simpler.key === best.key
				? `${best.label} predicts held-out shots best (score ${best.score.toFixed(2)} × the noise floor).`
				: `${simpler.label} is proposed: it is simpler and within ${SIMPLER_WITHIN * 100} % of the best held-out score (${simpler.score.toFixed(2)} vs ${best.score.toFixed(2)} for ${best.label}).`;
	}
	const anyCv = [...fits.values()].find((f) => f.crossValidation);
	return {
		comparison: {
			method: anyCv?.crossValidation?.method ?? null,
			folds: anyCv?.crossValidation?.folds ?? 0,
			noiseFloorByKind: floor,
			candidates: outcomes,
			proposed: proposed?.key ?? null,
			reason
		},
		fits,
		proposed: proposed ? (fits.get(proposed.key) ?? null) : null
	};
}
