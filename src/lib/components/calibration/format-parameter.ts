// Parameter values with their uncertainty, in the reader's units: the value is given to the
// digits its standard error supports (two significant digits of the SE, the usual convention
// for reporting a measurement with its uncertainty, e.g. JCGM 100:2008 (GUM) §7.2.6).
import { displayUnit, formatNumber, toDisplay, type Prefs } from '$lib/format';
import { unitSymbol } from '$lib/physics/units';

/** Digits after the point that show two significant digits of `se` (4 when there is no SE). */
export function digitsForError(se: number | null | undefined, fallback = 4): number {
	if (se === null || se === undefined || !Number.isFinite(se) || se <= 0) return fallback;
	// The nudge keeps 0.1 that arrives as 0.09999999999 (after a unit conversion) at its own decade.
	return Math.min(10, Math.max(0, 1 - Math.floor(Math.log10(se) + 1e-9)));
}

export interface ShownParameter {
	value: string;
	standardError: string | null;
	lower: string | null;
	upper: string | null;
	/** Unit symbol, or '' for a pure number. */
	unit: string;
}

/** Value, SE and interval of a parameter in the reader's unit (force, angle) or as a pure number. */
export function showParameter(
	p: { value: number | null; standardError: number | null; lower: number | null; upper: number | null },
	quantity: 'force' | 'angle' | null,
	prefs: Prefs
): ShownParameter {
	const unit = quantity ? displayUnit(quantity, prefs) : null;
	const conv = (v: number) => (quantity && unit ? toDisplay(quantity, v, unit as never) : v);
	const se = p.standardError === null ? null : Math.abs(conv(p.standardError) - conv(0));
	const digits = digitsForError(se);
	const fmt = (v: number | null) => (v === null || !Number.isFinite(v) ? null : formatNumber(conv(v), digits));
	return {
		value: fmt(p.value) ?? '—',
		standardError: se === null ? null : formatNumber(se, digits),
		lower: fmt(p.lower),
		upper: fmt(p.upper),
		unit: quantity && unit ? unitSymbol(quantity, unit as never) : ''
	};
}
