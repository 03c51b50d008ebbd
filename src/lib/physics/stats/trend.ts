// Drift of residuals over a session, and the mean of residuals with its interval (model bias).
// Residuals that trend with shot order or time (a warming rig, a leaking seal, a drifting
// chronograph) break the calibration's assumption of independent scatter (design/physics.md §5),
// so they are flagged rather than averaged away.
//
// Regression: ordinary least squares y = a + b·x (slope and intercept from simple-statistics'
// linearRegression), with the textbook slope standard error SE(b) = √(s²/Sxx), s² = RSS/(n − 2),
// t = b/SE(b) on n − 2 dof (e.g. Draper & Smith, *Applied Regression Analysis*, 3rd ed. (1998),
// ch. 1 [memory]).

import { linearRegression, mean, sampleStandardDeviation } from 'simple-statistics';
import { PhysicsInputError, requireFinite, requireInRange } from '../errors';
import { studentTQuantile, studentTTwoSidedPValue } from './student-t';

/**
 * Significance level below which a residual slope is flagged as drift. 0.05 is common practice
 * (the conventional 5 % level), not a property of the rigs; a lead may want a stricter level
 * when many sessions are screened at once.
 */
export const DRIFT_P_THRESHOLD = 0.05;

export interface LinearTrend {
	n: number;
	/**
	 * Change of the value per unit of position (per shot, or per second); null when n < 2 or all
	 * positions are equal.
	 */
	slope: number | null;
	intercept: number | null;
	/** Standard error of the slope; null when n < 3. */
	slopeStandardError: number | null;
	/** slope / SE on n − 2 dof; null when n < 3 or SE = 0. */
	tStatistic: number | null;
	dof: number | null;
	/** Two-sided p-value for slope = 0; null when it cannot be formed (see `reason`). */
	pValue: number | null;
	/** True when pValue < DRIFT_P_THRESHOLD. */
	driftFlag: boolean;
	/** Why some fields are null; null when all are present. */
	reason: string | null;
}

function assertFinite(name: string, values: readonly number[]): void {
	values.forEach((v, i) => requireFinite(v, `${name}[${i}]`));
}

/**
 * Least-squares line of `values` (e.g. speed residuals, m/s) against `positions` (shot index, or
 * time in s); positions default to the shot order 0, 1, 2, …. Tests slope = 0 with Student's t.
 */
export function linearTrend(values: readonly number[], positions?: readonly number[]): LinearTrend {
	const n = values.length;
	const x = positions ?? values.map((_, i) => i);
	if (x.length !== n) {
		throw new PhysicsInputError(
			'positions',
			'out-of-range',
			`positions has ${x.length} entries, values has ${n}`
		);
	}
	assertFinite('values', values);
	assertFinite('positions', x);
	const empty = {
		n,
		slope: null,
		intercept: null,
		slopeStandardError: null,
		tStatistic: null,
		dof: null,
		pValue: null,
		driftFlag: false
	};
	if (n < 2) return { ...empty, reason: 'needs at least 2 points for a line' };

	const meanX = mean(x);
	let sxx = 0;
	for (const xi of x) sxx += (xi - meanX) * (xi - meanX);
	if (sxx === 0) return { ...empty, reason: 'all positions are equal: the slope is undefined' };

	const { m: slope, b: intercept } = linearRegression(x.map((xi, i) => [xi, values[i]]));
	if (n < 3) {
		return {
			...empty,
			slope,
			intercept,
			reason: 'needs at least 3 points: a line through 2 leaves no dof for its standard error'
		};
	}
	const dof = n - 2;
	let rss = 0;
	for (let i = 0; i < n; i++) {
		const residual = values[i] - (intercept + slope * x[i]);
		rss += residual * residual;
	}
	const slopeStandardError = Math.sqrt(rss / dof / sxx);
	const base = { n, slope, intercept, slopeStandardError, dof };
	if (slopeStandardError === 0) {
		// The points lie exactly on a line: any non-zero slope is certain, a zero slope certainly none.
		return slope === 0
			? { ...base, tStatistic: null, pValue: null, driftFlag: false, reason: 'values are constant' }
			: {
					...base,
					tStatistic: null,
					pValue: 0,
					driftFlag: true,
					reason: 'points lie exactly on a line: t is unbounded'
				};
	}
	const tStatistic = slope / slopeStandardError;
	const pValue = studentTTwoSidedPValue(tStatistic, dof);
	return {
		...base,
		tStatistic,
		pValue,
		driftFlag: pValue < DRIFT_P_THRESHOLD,
		reason: null
	};
}

export interface MeanInterval {
	n: number;
	mean: number | null;
	/** SD/√n; null when n < 2. */
	standardError: number | null;
	dof: number | null;
	/** t((1 + level)/2; n − 1). */
	tQuantile: number | null;
	lower: number | null;
	upper: number | null;
	level: number;
}

/**
 * Mean with its Student-t confidence interval, mean ± t((1 + level)/2; n − 1)·s/√n (e.g. for the
 * bias of a model from its residuals: an interval excluding 0 says the model is off on average).
 */
export function meanWithInterval(values: readonly number[], level = 0.95): MeanInterval {
	requireInRange(level, 'level', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
	assertFinite('values', values);
	const n = values.length;
	const none = { standardError: null, dof: null, tQuantile: null, lower: null, upper: null, level };
	if (n === 0) return { n, mean: null, ...none };
	const average = mean(values);
	if (n < 2) return { n, mean: average, ...none };
	const dof = n - 1;
	const standardError = sampleStandardDeviation(values) / Math.sqrt(n);
	const tQuantile = studentTQuantile((1 + level) / 2, dof);
	return {
		n,
		mean: average,
		standardError,
		dof,
		tQuantile,
		lower: average - tQuantile * standardError,
		upper: average + tQuantile * standardError,
		level
	};
}
