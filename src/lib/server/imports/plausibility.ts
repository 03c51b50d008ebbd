// "Units that look wrong": a chronograph file in ft/s read as m/s passes every range check
// (80 m/s is a possible speed), yet every residual would be off by a factor 3.28. So whole
// columns are compared with what the range knows, on a sample of the file's rows:
//
// - Fill pressure and speeds, against the model. For each row the model (the calibration in
//   force, or the nominal values) predicts the muzzle speed — and the downrange speed at the
//   session's chronograph — from the fill pressure. The median of measured ÷ predicted is taken
//   per speed column. The chosen units stand when every median lies within PLAUSIBLE_RATIO
//   (×/÷ 1.5: wider than any honest calibration error; an efficiency off by half moves speeds
//   by only √2). Otherwise every combination of a pressure unit and speed units is tried, and
//   if one brings every median within CONVINCING_RATIO (×/÷ 1.25), the columns whose unit it
//   changes are flagged: "speeds that fit ft/s when m/s was chosen", "pressures that fit psi
//   when kPa was chosen". Units too close to tell apart (ft/s and km/h differ by 10 %) may both
//   fit: then the one with fewer changes, then the more common unit (m/s, ft/s, km/h; bar, psi,
//   kPa, Pa) is suggested and the other named. A chosen unit under which the model cannot
//   predict the shots at all (the projectile would stay in the barrel) counts as implausible.
// - Impact offsets: a median offset above MAX_TYPICAL_OFFSET_M (0.5 m) from the aim point, or
//   below MIN_TYPICAL_OFFSET_M (0.1 mm), while another length unit puts it between the two.
// - Per-shot air temperature and barometric pressure, against the session's conditions: more
//   than 15 °C or 15 % away while another unit is within 5 °C or 5 %.
// A column is flagged only when the alternative is convincing; a file the model simply does not
// fit (a leaking valve, a wrong rig) is left to the residuals.
import { fromSI, toSI, unitsOf, type Quantity, type UnitOf } from '$lib/physics/units';
import type { ImportFieldId, ResolvedColumn } from '$lib/schemas/imports';
import type { ReadShot, SessionTarget, UnitCheck, UnitFinding } from './validate';

export const PLAUSIBLE_RATIO = 1.5;
export const CONVINCING_RATIO = 1.25;
export const MAX_TYPICAL_OFFSET_M = 0.5;
export const MIN_TYPICAL_OFFSET_M = 1e-4;
const TEMPERATURE_OFF_C = 15;
const TEMPERATURE_CLOSE_C = 5;
const PRESSURE_OFF = 0.15;
const PRESSURE_CLOSE = 0.05;
/** Rows of the file the check looks at (evenly spread). */
export const SAMPLE_ROWS = 200;
/** Units in the order chronographs and gauges commonly use them (ties between units that fit alike). */
const COMMON_SPEED = ['m/s', 'ft/s', 'km/h'];
const COMMON_PRESSURE = ['bar', 'psi', 'kPa', 'Pa'];
/** Fewer usable rows than this and a column is not judged. */
const MIN_ROWS = 3;

export type Prediction = { muzzleMps: number; downrangeMps: number | null };
/** The model's prediction for a fill pressure (Pa) in one target session; null when it cannot say. */
export type Predictor = (fillGaugePa: number) => Prediction | null;

function median(values: number[]): number | null {
	if (values.length < MIN_ROWS) return null;
	const sorted = [...values].sort((a, b) => a - b);
	const mid = sorted.length >> 1;
	return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

const SPEED_FIELDS = ['muzzleSpeed', 'downrangeSpeed'] as const;
type SpeedField = (typeof SPEED_FIELDS)[number];

function spread<T>(items: T[], n: number): T[] {
	if (items.length <= n) return items;
	const step = items.length / n;
	return Array.from({ length: n }, (_, i) => items[Math.floor(i * step)]);
}

/** A stored value (SI; °C) as it was written, in the column's chosen unit. */
function written(quantity: Quantity, unit: string, stored: number) {
	const si = quantity === 'temperature' ? toSI('temperature', 'degC', stored) : stored;
	return fromSI(quantity, unit as UnitOf[typeof quantity], si);
}

/** The same written number read in another unit, back in stored units. */
function reread(quantity: Quantity, unit: string, value: number) {
	const si = toSI(quantity, unit as UnitOf[typeof quantity], value);
	return quantity === 'temperature' ? fromSI('temperature', 'degC', si) : si;
}

function symbol(quantity: Quantity, unit: string) {
	return unitsOf(quantity).find((u) => u.id === unit)?.symbol ?? unit;
}

function speedOf(shot: ReadShot, field: SpeedField) {
	return field === 'muzzleSpeed' ? shot.muzzleSpeedMps : shot.downrangeSpeedMps;
}

/** The unit check for a file, given a predictor per target session (by key). */
export function unitCheck(predictors: Map<string, Predictor>): UnitCheck {
	return (placed, mapping) => {
		const sample = spread(placed, SAMPLE_ROWS);
		const column = (field: ImportFieldId) => mapping.columns.find((c) => c.field === field) ?? null;
		const findings: UnitFinding[] = [];
		findings.push(...speedAndPressure(sample, column, predictors));
		findings.push(...offsets(sample, column));
		findings.push(...conditions(sample, column));
		return findings;
	};
}

type Placed = { shot: ReadShot; target: SessionTarget };

function speedAndPressure(sample: Placed[], column: (f: ImportFieldId) => ResolvedColumn | null, predictors: Map<string, Predictor>): UnitFinding[] {
	const fill = column('fillPressure');
	const speeds = SPEED_FIELDS.map((f) => column(f)).filter((c): c is ResolvedColumn => c !== null);
	if (!fill?.unit || speeds.length === 0) return [];
	const pressureUnits = unitsOf('pressure').map((u) => u.id as string);
	const speedUnits = unitsOf('speed').map((u) => u.id as string);

	// Median measured ÷ predicted per (pressure unit, speed column, speed unit).
	const medians = new Map<string, number | null>();
	for (const pressureUnit of pressureUnits) {
		const predicted = sample.map(({ shot, target }) => {
			const fillPa = reread('pressure', pressureUnit, written('pressure', fill.unit!, shot.fillGaugePa));
			return predictors.get(target.key)?.(fillPa) ?? null;
		});
		for (const speed of speeds) {
			const field = speed.field as SpeedField;
			for (const speedUnit of speedUnits) {
				const ratios: number[] = [];
				sample.forEach(({ shot }, i) => {
					const measured = speedOf(shot, field);
					const p = predicted[i];
					const expected = p ? (field === 'downrangeSpeed' ? (p.downrangeMps ?? p.muzzleMps) : p.muzzleMps) : null;
					if (measured === null || !expected || !(expected > 0)) return;
					ratios.push(reread('speed', speedUnit, written('speed', speed.unit!, measured)) / expected);
				});
				medians.set(`${pressureUnit}|${field}|${speedUnit}`, median(ratios));
			}
		}
	}
	type Combination = { pressure: string; speeds: Map<SpeedField, string>; score: number; changes: number };
	const score = (pressure: string, units: Map<SpeedField, string>) => {
		let worst = 0;
		for (const [field, unit] of units) {
			const m = medians.get(`${pressure}|${field}|${unit}`);
			if (m === null || m === undefined) return null;
			worst = Math.max(worst, Math.abs(Math.log(m)));
		}
		return worst;
	};
	const chosenSpeeds = new Map(speeds.map((s) => [s.field as SpeedField, s.unit!]));
	const chosen = score(fill.unit, chosenSpeeds);
	// Null: under the chosen units the model cannot predict these shots at all (the projectile
	// would not leave the barrel) — as telling as a factor of three.
	if (chosen !== null && chosen <= Math.log(PLAUSIBLE_RATIO)) return [];

	const fields = [...chosenSpeeds.keys()];
	const assignments = fields.reduce<Map<SpeedField, string>[]>(
		(acc, field) => acc.flatMap((partial) => speedUnits.map((u) => new Map([...partial, [field, u]]))),
		[new Map()]
	);
	const convincing: Combination[] = [];
	for (const pressure of pressureUnits)
		for (const units of assignments) {
			const s = score(pressure, units);
			if (s === null || s > Math.log(CONVINCING_RATIO)) continue;
			const changes = (pressure !== fill.unit ? 1 : 0) + [...units].filter(([f, u]) => chosenSpeeds.get(f) !== u).length;
			if (changes > 0) convincing.push({ pressure, speeds: units, score: s, changes });
		}
	if (convincing.length === 0) return [];
	// Units within 25 % of each other (ft/s and km/h) both fit a model that is itself uncertain:
	// among the convincing combinations, the fewest changes, then the more common units.
	const rank = (c: Combination) =>
		COMMON_PRESSURE.indexOf(c.pressure) + [...c.speeds.values()].reduce((sum, u) => sum + COMMON_SPEED.indexOf(u), 0);
	convincing.sort((a, b) => a.changes - b.changes || rank(a) - rank(b) || a.score - b.score);
	const best = convincing[0];

	const findings: UnitFinding[] = [];
	const ratioText = (pressure: string, field: SpeedField, unit: string) => {
		const m = medians.get(`${pressure}|${field}|${unit}`);
		return m === null || m === undefined ? null : `${m.toFixed(2)}×`;
	};
	const others = (field: SpeedField | null, suggested: string, quantity: 'pressure' | 'speed') => {
		const alike = convincing
			.filter((c) => c.changes === best.changes)
			.map((c) => (field ? c.speeds.get(field)! : c.pressure))
			.filter((u, i, all) => u !== suggested && all.indexOf(u) === i);
		return alike.length ? ` (or ${alike.map((u) => symbol(quantity, u)).join(' or ')}, which fits as well)` : '';
	};
	const firstSpeed = fields[0];
	const asChosen = (pressure: string, field: SpeedField, unit: string) => {
		const r = ratioText(pressure, field, unit);
		return r ? `give measured speeds of ${r} the model’s prediction` : 'give shots the model says would not leave the barrel';
	};
	if (best.pressure !== fill.unit)
		findings.push({
			columnIndex: fill.index,
			header: fill.header,
			field: 'fillPressure',
			chosen: fill.unit,
			suggested: best.pressure,
			reason: `read as ${symbol('pressure', fill.unit)}, the fill pressures ${asChosen(fill.unit, firstSpeed, chosenSpeeds.get(firstSpeed)!)}; read as ${symbol('pressure', best.pressure)}, ${ratioText(best.pressure, firstSpeed, best.speeds.get(firstSpeed)!)}. Is the column in ${symbol('pressure', best.pressure)}${others(null, best.pressure, 'pressure')}?`
		});
	for (const speed of speeds) {
		const field = speed.field as SpeedField;
		const suggested = best.speeds.get(field)!;
		if (suggested === speed.unit) continue;
		const chosenRatio = ratioText(fill.unit, field, speed.unit!);
		findings.push({
			columnIndex: speed.index,
			header: speed.header,
			field,
			chosen: speed.unit!,
			suggested,
			reason: `read as ${symbol('speed', speed.unit!)}, the speeds are ${chosenRatio ?? 'far from'} what the model predicts from the fill pressures; read as ${symbol('speed', suggested)}, ${ratioText(best.pressure, field, suggested)}. Is the column in ${symbol('speed', suggested)}${others(field, suggested, 'speed')}?`
		});
	}
	return findings;
}

function offsets(sample: Placed[], column: (f: ImportFieldId) => ResolvedColumn | null): UnitFinding[] {
	const findings: UnitFinding[] = [];
	for (const field of ['impactX', 'impactY'] as const) {
		const c = column(field);
		if (!c?.unit) continue;
		const values = sample.map(({ shot }) => (field === 'impactX' ? shot.impactXM : shot.impactYM)).filter((v): v is number => v !== null && v !== 0);
		const m = median(values.map(Math.abs));
		if (m === null || (m <= MAX_TYPICAL_OFFSET_M && m >= MIN_TYPICAL_OFFSET_M)) continue;
		const raw = written('length', c.unit, m);
		// Smaller units first when the offsets are too large, larger first when too small.
		const order = m > MAX_TYPICAL_OFFSET_M ? ['mm', 'cm', 'in', 'ft', 'm'] : ['m', 'ft', 'cm', 'in', 'mm'];
		const alternative = order.find((u) => {
			if (u === c.unit) return false;
			const v = toSI('length', u as UnitOf['length'], raw);
			return v <= MAX_TYPICAL_OFFSET_M && v >= MIN_TYPICAL_OFFSET_M;
		});
		if (!alternative) continue;
		findings.push({
			columnIndex: c.index,
			header: c.header,
			field,
			chosen: c.unit,
			suggested: alternative,
			reason: `read as ${symbol('length', c.unit)}, the typical impact lies ${formatLength(m)} from the aim point; read as ${symbol('length', alternative)}, ${formatLength(toSI('length', alternative as UnitOf['length'], raw))}. Is the column in ${symbol('length', alternative)}?`
		});
	}
	return findings;
}

function formatLength(m: number) {
	return m >= 1 ? `${m.toPrecision(3)} m` : `${(m * 1000).toPrecision(3)} mm`;
}

function conditions(sample: Placed[], column: (f: ImportFieldId) => ResolvedColumn | null): UnitFinding[] {
	const findings: UnitFinding[] = [];
	const temperature = column('airTemperature');
	if (temperature?.unit) {
		const rows = sample.filter(({ shot }) => shot.temperatureC !== null);
		const offBy = (unit: string) =>
			median(rows.map(({ shot, target }) => reread('temperature', unit, written('temperature', temperature.unit!, shot.temperatureC!)) - target.temperatureC));
		const chosen = offBy(temperature.unit);
		if (chosen !== null && Math.abs(chosen) > TEMPERATURE_OFF_C) {
			const alternative = unitsOf('temperature')
				.map((u) => u.id as string)
				.filter((u) => u !== temperature.unit)
				.map((u) => ({ u, off: offBy(u) }))
				.filter((a) => a.off !== null && Math.abs(a.off) <= TEMPERATURE_CLOSE_C)
				.sort((a, b) => Math.abs(a.off!) - Math.abs(b.off!))[0];
			if (alternative)
				findings.push({
					columnIndex: temperature.index,
					header: temperature.header,
					field: 'airTemperature',
					chosen: temperature.unit,
					suggested: alternative.u,
					reason: `read as ${symbol('temperature', temperature.unit)}, the air temperatures are ${Math.abs(chosen).toFixed(0)} °C away from the session’s; read as ${symbol('temperature', alternative.u)}, ${Math.abs(alternative.off!).toFixed(1)} °C. Is the column in ${symbol('temperature', alternative.u)}?`
				});
		}
	}
	const pressure = column('barometricPressure');
	if (pressure?.unit) {
		const rows = sample.filter(({ shot }) => shot.pressurePa !== null);
		const offBy = (unit: string) =>
			median(rows.map(({ shot, target }) => Math.log(reread('pressure', unit, written('pressure', pressure.unit!, shot.pressurePa!)) / target.pressurePa)));
		const chosen = offBy(pressure.unit);
		if (chosen !== null && Math.abs(chosen) > Math.log(1 + PRESSURE_OFF)) {
			const alternative = unitsOf('pressure')
				.map((u) => u.id as string)
				.filter((u) => u !== pressure.unit)
				.map((u) => ({ u, off: offBy(u) }))
				.filter((a) => a.off !== null && Math.abs(a.off) <= Math.log(1 + PRESSURE_CLOSE))
				.sort((a, b) => Math.abs(a.off!) - Math.abs(b.off!))[0];
			if (alternative)
				findings.push({
					columnIndex: pressure.index,
					header: pressure.header,
					field: 'barometricPressure',
					chosen: pressure.unit,
					suggested: alternative.u,
					reason: `read as ${symbol('pressure', pressure.unit)}, the barometric pressures are ${Math.exp(chosen).toPrecision(3)}× the session’s; read as ${symbol('pressure', alternative.u)}, ${Math.exp(alternative.off!).toPrecision(3)}×. Is the column in ${symbol('pressure', alternative.u)}?`
				});
		}
	}
	return findings;
}

/** The more common of the units that fit within CONVINCING_RATIO, else the one that fits best. */
function pick<T extends { unit: string; score: number }>(candidates: T[], common: string[]): T | null {
	if (candidates.length === 0) return null;
	const fitting = candidates.filter((c) => c.score <= Math.log(CONVINCING_RATIO));
	if (fitting.length > 0) return [...fitting].sort((a, b) => common.indexOf(a.unit) - common.indexOf(b.unit))[0];
	return [...candidates].sort((a, b) => a.score - b.score)[0];
}

/**
 * Units for columns whose header names none, from the values (the mapping suggestion): the
 * pressure and speed units under which the first rows agree with the model, when that agreement
 * is within PLAUSIBLE_RATIO (the more common unit when several agree). Columns with a unit
 * already keep it.
 */
export function guessSpeedAndPressureUnits(
	columns: ResolvedColumn[],
	rows: { fill: number; speeds: Partial<Record<SpeedField, number>> }[],
	predict: Predictor
): Map<number, string> {
	const out = new Map<number, string>();
	const fill = columns.find((c) => c.field === 'fillPressure');
	const speeds = columns.filter((c) => c.field === 'muzzleSpeed' || c.field === 'downrangeSpeed');
	if (!fill || speeds.length === 0 || rows.length < MIN_ROWS) return out;
	const pressureUnits = fill.unit ? [fill.unit] : unitsOf('pressure').map((u) => u.id as string);
	const options: { unit: string; score: number; speeds: Map<number, string> }[] = [];
	for (const pressure of pressureUnits) {
		const predicted = rows.map((r) => (Number.isFinite(r.fill) ? predict(toSI('pressure', pressure as UnitOf['pressure'], r.fill)) : null));
		let worst = 0;
		const chosen = new Map<number, string>();
		let usable = true;
		for (const speed of speeds) {
			const field = speed.field as SpeedField;
			const candidates = (speed.unit ? [speed.unit] : unitsOf('speed').map((u) => u.id as string)).flatMap((unit) => {
				const ratios: number[] = [];
				rows.forEach((r, i) => {
					const measured = r.speeds[field];
					const p = predicted[i];
					const expected = p ? (field === 'downrangeSpeed' ? (p.downrangeMps ?? p.muzzleMps) : p.muzzleMps) : null;
					if (measured === undefined || !Number.isFinite(measured) || !expected) return;
					ratios.push(toSI('speed', unit as UnitOf['speed'], measured) / expected);
				});
				const m = median(ratios);
				return m === null || !(m > 0) ? [] : [{ unit, score: Math.abs(Math.log(m)) }];
			});
			const best = pick(candidates, COMMON_SPEED);
			if (!best) {
				usable = false;
				break;
			}
			chosen.set(speed.index, best.unit);
			worst = Math.max(worst, best.score);
		}
		if (usable) options.push({ unit: pressure, score: worst, speeds: chosen });
	}
	const best = pick(options, COMMON_PRESSURE);
	if (!best || best.score > Math.log(PLAUSIBLE_RATIO)) return out;
	if (!fill.unit) out.set(fill.index, best.unit);
	for (const speed of speeds) if (!speed.unit) out.set(speed.index, best.speeds.get(speed.index)!);
	return out;
}
