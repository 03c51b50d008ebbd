// How well a calibration predicts shots it has not seen (physics.md §5): refit without each fold
// (leave one session out, or k-fold by shot order i mod k) from the full fit's parameters,
// predict the held-out shots, and pool the squared errors per kind. p_ref stays that of the full
// fit (η0 + η1(p − p_ref)/p_ref spans the same lines for any p_ref, so predictions do not depend
// on it).

import { PhysicsInputError } from '../errors';
import type { CalibrationParameters, ObservationKind } from './model';
import { fitCore, modelShot, rms, type CoreFit, type FitConfig, type PerKind, type PreparedShot } from './fit';

export interface CrossValidationReport {
	method: 'leave-one-session-out' | 'k-fold';
	folds: number;
	/** Folds whose training fit stopped early or could not predict the held-out shots. */
	failedFolds: number;
	/** Held-out shots that could not be predicted (not in the RMS). */
	unpredicted: number;
	/** RMS of (measured − predicted) for held-out shots, per kind. */
	rmsByKind: PerKind;
}

export const DEFAULT_FOLDS = 5;

export function crossValidate(
	shots: PreparedShot[],
	config: FitConfig,
	full: CalibrationParameters,
	mode: 'auto' | number
): CrossValidationReport | null {
	const sessions = [...new Set(shots.map((s) => s.sessionKey))];
	const bySession = mode === 'auto' && sessions.length >= 2;
	const k = bySession ? sessions.length : Math.min(typeof mode === 'number' ? mode : DEFAULT_FOLDS, shots.length);
	if (k < 2) return null;
	const foldOf = (s: PreparedShot, i: number) => (bySession ? sessions.indexOf(s.sessionKey) : i % k);
	const errors: Record<ObservationKind, number[]> = { muzzleSpeed: [], downrangeSpeed: [], impactHeight: [] };
	let failedFolds = 0;
	let unpredicted = 0;
	for (let fold = 0; fold < k; fold++) {
		const train = shots.filter((s, i) => foldOf(s, i) !== fold);
		const test = shots.filter((s, i) => foldOf(s, i) === fold);
		if (test.length === 0) continue;
		const nTrain = train.reduce((n, s) => n + s.observations.length, 0);
		if (nTrain <= config.names.length) {
			failedFolds++;
			continue;
		}
		let fit: CoreFit;
		try {
			fit = fitCore(train, { ...config, base: full }, full);
		} catch (e) {
			if (e instanceof PhysicsInputError) {
				failedFolds++;
				continue;
			}
			throw e;
		}
		if (fit.failure !== null) {
			failedFolds++;
			continue;
		}
		for (const s of test) {
			const m = modelShot(config.model, s, fit.params, false, config.curves);
			if (!m) {
				unpredicted++;
				continue;
			}
			s.observations.forEach((o, q) => errors[o.kind].push(o.measured - m.values[q]));
		}
	}
	return {
		method: bySession ? 'leave-one-session-out' : 'k-fold',
		folds: k,
		failedFolds,
		unpredicted,
		rmsByKind: { muzzleSpeed: rms(errors.muzzleSpeed), downrangeSpeed: rms(errors.downrangeSpeed), impactHeight: rms(errors.impactHeight) }
	};
}
