// Statistics of a string of measured speeds (chronograph readings), per design/physics.md §6 and
// reference-sheet.md §6: mean, SD with n − 1, extreme spread = max − min [practice], coefficient
// of variation. Speeds in m/s (any unit works; every output but `cv` is in the input unit).

import { max, mean, min, sampleStandardDeviation } from 'simple-statistics';
import { requireFinite } from '../errors';

export interface SpeedStats {
	n: number;
	/** Arithmetic mean; null when n = 0. */
	mean: number | null;
	/** Sample standard deviation (divisor n − 1); null when n < 2. */
	sd: number | null;
	/** max − min; 0 for one shot, null when n = 0. */
	extremeSpread: number | null;
	/** sd / mean as a fraction (0.0097, not 0.97 %); null when sd is null or the mean is 0. */
	cv: number | null;
	min: number | null;
	max: number | null;
}

/** Summary of a speed string. A non-finite entry throws PhysicsInputError rather than giving NaN. */
export function speedStats(speeds: readonly number[]): SpeedStats {
	speeds.forEach((v, i) => requireFinite(v, `speeds[${i}]`));
	const n = speeds.length;
	if (n === 0) {
		return { n, mean: null, sd: null, extremeSpread: null, cv: null, min: null, max: null };
	}
	const average = mean(speeds);
	const lowest = min(speeds);
	const highest = max(speeds);
	// simple-statistics throws for n < 2 (no spread from one value): report null instead.
	const sd = n >= 2 ? sampleStandardDeviation(speeds) : null;
	return {
		n,
		mean: average,
		sd,
		extremeSpread: highest - lowest,
		cv: sd !== null && average !== 0 ? sd / average : null,
		min: lowest,
		max: highest
	};
}
