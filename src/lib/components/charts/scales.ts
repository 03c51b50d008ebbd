// Axis domains for the charts: one place that decides how much room a chart leaves around its
// data, so points never sit on the frame and a chart of one value (a session fired at a single
// fill pressure) still gets a readable span instead of a zero-width axis.

/** Fraction of the data's span added on each side. */
export const DEFAULT_PAD_FRACTION = 0.08;

const finiteOnly = (values: readonly number[]) => values.filter((v) => Number.isFinite(v));

/**
 * [min, max] of the values (and of `include`, e.g. 0 or a tolerance), widened by `padFraction`
 * of the span on each side. With no span (one value, or all equal) the span is `minSpan`, or 10 %
 * of the value's size, or 1. With no finite value at all: [0, 1].
 */
export function paddedDomain(
	values: readonly number[],
	options: { include?: readonly number[]; padFraction?: number; minSpan?: number } = {}
): [number, number] {
	const all = finiteOnly([...values, ...(options.include ?? [])]);
	if (all.length === 0) return [0, 1];
	let lo = Math.min(...all);
	let hi = Math.max(...all);
	const minSpan = options.minSpan ?? 0;
	if (hi - lo < minSpan) {
		const mid = (lo + hi) / 2;
		lo = mid - minSpan / 2;
		hi = mid + minSpan / 2;
	}
	const span = hi - lo || Math.abs(hi) * 0.1 || 1;
	const pad = span * (options.padFraction ?? DEFAULT_PAD_FRACTION);
	return hi === lo ? [lo - span / 2 - pad, hi + span / 2 + pad] : [lo - pad, hi + pad];
}

/**
 * A domain symmetric about zero that holds every value (and `include`), padded: residual charts
 * keep zero in the middle so a bias shows as points off the centre line.
 */
export function symmetricDomain(
	values: readonly number[],
	options: { include?: readonly number[]; padFraction?: number } = {}
): [number, number] {
	const all = finiteOnly([...values, ...(options.include ?? [])]);
	const r = all.reduce((m, v) => Math.max(m, Math.abs(v)), 0) || 1;
	const edge = r * (1 + (options.padFraction ?? DEFAULT_PAD_FRACTION));
	return [-edge, edge];
}

const DAY_MS = 24 * 3600 * 1000;

/**
 * A time axis in days before today (see daysBefore) that ends today and spans at least
 * `minSpanDays`, padded on both sides.
 */
export function pastDomain(days: readonly number[], minSpanDays = 7, padFraction = DEFAULT_PAD_FRACTION): [number, number] {
	const lo = Math.min(-minSpanDays, ...finiteOnly(days));
	const hi = Math.max(0, ...finiteOnly(days));
	const pad = (hi - lo) * padFraction;
	return [lo - pad, hi + pad];
}

/** Days from `now` back to `date` as a negative number (0 = now): a time axis that ends today. */
export function daysBefore(date: Date | string, now: Date): number {
	return (new Date(date).getTime() - now.getTime()) / DAY_MS;
}

/**
 * Fill pressures to draw a model curve over: the data's range widened on each side by a quarter
 * of its span or a tenth of its highest pressure, whichever is more, and cut to [0, rated]: the
 * curve shows a little beyond the data (also when every shot was filled alike), and never a
 * pressure the rig may not take.
 */
export function curveRange(pressuresPa: readonly number[], ratedPa: number): [number, number] {
	const values = finiteOnly(pressuresPa);
	if (values.length === 0) return [0, ratedPa];
	const lo = Math.min(...values);
	const hi = Math.max(...values);
	const pad = Math.max((hi - lo) * 0.25, hi * 0.1);
	return [Math.max(0, lo - pad), Math.min(ratedPa, hi + pad)];
}

/** A tick value without binary noise (0.30000000000000004 → "0.3"). */
export function formatTick(value: number): string {
	return String(Number(value.toPrecision(10)));
}

/**
 * Elapsed time of shots from the first, in hours when they span less than two days, else in
 * days: the x axis of residuals against time.
 */
export function elapsedAxis(times: readonly (Date | string)[]): { values: number[]; unit: 'h' | 'd' } {
	const ms = times.map((t) => new Date(t).getTime());
	if (ms.length === 0) return { values: [], unit: 'h' };
	const first = Math.min(...ms);
	const span = Math.max(...ms) - first;
	const unit = span < 2 * DAY_MS ? 'h' : 'd';
	const per = unit === 'h' ? 3600 * 1000 : DAY_MS;
	return { values: ms.map((t) => (t - first) / per), unit };
}
