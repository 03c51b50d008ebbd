// Shots as CSV: per session, per rig and date range, and the blank template. Our own format:
// comma-separated, a header row of snake_case names that end in their unit (SI; air
// temperature in °C), CRLF line ends (RFC 4180), UTF-8, ISO 8601 UTC times. Numbers are written
// as plain numbers (negatives included, 15 significant digits, so a file read back gives the
// same values); text cells (titles, names, notes, reasons) that begin with =, +, -, @, tab or CR are
// neutralised with a leading ' so a spreadsheet does not run them as formulas (design/product.md,
// "Details the issues leave open"). The importer recognises every shot column by name and unit,
// and drops that ' again, so an export imports back unchanged.
import { error } from '@sveltejs/kit';
import { and, asc, eq, gte, isNull, lte, sql, type SQL } from 'drizzle-orm';
import { projectiles, rangeSessions, rigs, shotPredictions, shots } from '../db/schema';
import type { Executor } from '../reconcile/model';
import { neutralise } from './values';

/** Shots read per query while streaming an export. */
const EXPORT_PAGE = 5000;

/** The shot columns, in the blank template and at the start of every export. */
export const TEMPLATE_COLUMNS = [
	'sequence',
	'fired_at_utc',
	'fill_pressure_pa',
	'muzzle_speed_m_per_s',
	'downrange_speed_m_per_s',
	'impact_x_m',
	'impact_y_m',
	'miss',
	'note',
	'air_temperature_degc',
	'barometric_pressure_pa'
] as const;

/** The blank template: the header row only. */
export function blankTemplate() {
	return TEMPLATE_COLUMNS.join(',') + '\r\n';
}

type Cell = string | number | boolean | null;
/** A text cell (neutralised) as opposed to a number. */
const text = (value: string | null): Cell => (value === null ? null : neutralise(value));

/**
 * Significant digits of exported numbers: all that a double carries reliably (15), so a value
 * converted from millimetres reads −0.0045, not −0.0045000000000000005.
 */
const SIGNIFICANT_DIGITS = 15;

/** One CSV field: numbers as plain numbers; text quoted when it holds a comma, quote or line break. */
export function csvField(value: Cell): string {
	if (value === null) return '';
	if (typeof value === 'number') return Number.isFinite(value) ? String(Number(value.toPrecision(SIGNIFICANT_DIGITS))) : '';
	if (typeof value === 'boolean') return value ? 'yes' : 'no';
	return /[",\r\n]|^\s|\s$/.test(value) ? `"${value.replace(/"/g, '""')}"` : value;
}

export const csvLine = (cells: Cell[]) => cells.map(csvField).join(',') + '\r\n';

const row = {
	session: rangeSessions,
	shot: shots,
	prediction: shotPredictions,
	rig: rigs.name,
	projectile: projectiles.name
};
type ExportRow = {
	session: typeof rangeSessions.$inferSelect;
	shot: typeof shots.$inferSelect;
	prediction: typeof shotPredictions.$inferSelect | null;
	rig: string;
	projectile: string;
};

const pass = (v: boolean | null | undefined): Cell => (v === null || v === undefined ? null : v ? 'pass' : 'fail');

/** Every column of an export: the template's shot columns, where they came from, then the model. */
const EXPORT_COLUMNS: [string, (r: ExportRow) => Cell][] = [
	['sequence', (r) => r.shot.sequence],
	['fired_at_utc', (r) => r.shot.firedAt.toISOString()],
	['fill_pressure_pa', (r) => r.shot.fillGaugePa],
	['muzzle_speed_m_per_s', (r) => r.shot.muzzleSpeedMps],
	['downrange_speed_m_per_s', (r) => r.shot.downrangeSpeedMps],
	['impact_x_m', (r) => r.shot.impactXM],
	['impact_y_m', (r) => r.shot.impactYM],
	['miss', (r) => r.shot.miss],
	['note', (r) => text(r.shot.note)],
	['air_temperature_degc', (r) => r.shot.temperatureC],
	['barometric_pressure_pa', (r) => r.shot.pressurePa],
	['session_id', (r) => r.session.id],
	['session_title', (r) => text(r.session.title)],
	['rig', (r) => text(r.rig)],
	['projectile', (r) => text(r.projectile)],
	['shot_id', (r) => r.shot.id],
	['import_id', (r) => r.shot.importId],
	['calibration_id', (r) => r.prediction?.calibrationId ?? null],
	['predicted_muzzle_speed_m_per_s', (r) => r.prediction?.predictedMuzzleMps ?? null],
	['muzzle_speed_residual_m_per_s', (r) => r.prediction?.muzzleResidualMps ?? null],
	['predicted_downrange_speed_m_per_s', (r) => r.prediction?.predictedDownrangeMps ?? null],
	['downrange_speed_residual_m_per_s', (r) => r.prediction?.downrangeResidualMps ?? null],
	['predicted_target_speed_m_per_s', (r) => r.prediction?.predictedTargetMps ?? null],
	['predicted_impact_x_m', (r) => r.prediction?.predictedImpactXM ?? null],
	['predicted_impact_y_m', (r) => r.prediction?.predictedImpactYM ?? null],
	['impact_x_residual_m', (r) => r.prediction?.impactXResidualM ?? null],
	['impact_y_residual_m', (r) => r.prediction?.impactYResidualM ?? null],
	['speed_judged_on', (r) => text(r.prediction?.speedBasis ?? null)],
	['judged_speed_m_per_s', (r) => r.prediction?.judgedSpeedMps ?? null],
	['speed_result', (r) => pass(r.prediction?.passSpeed)],
	['impact_result', (r) => pass(r.prediction?.passImpact)],
	['outside_calibrated_pressures', (r) => (r.prediction ? r.prediction.outsideCalibratedPressures : null)],
	['prediction_error', (r) => text(r.prediction?.predictionError ?? null)]
];

export const EXPORT_HEADER = EXPORT_COLUMNS.map(([name]) => name);

export function exportLine(r: ExportRow) {
	return csvLine(EXPORT_COLUMNS.map(([, value]) => value(r)));
}

export type ShotSelection = { sessionId: number } | { rigId: number; from: Date | null; to: Date | null };

/**
 * The live shots of a selection as CSV, streamed in pages (keyset on session id and sequence), so
 * a 100 000-shot session does not sit in memory as one string.
 */
export function shotsCsv(db: Executor, selection: ShotSelection): ReadableStream<Uint8Array> {
	const encoder = new TextEncoder();
	const filter: SQL | undefined =
		'sessionId' in selection
			? eq(shots.sessionId, selection.sessionId)
			: and(
					eq(rangeSessions.rigId, selection.rigId),
					isNull(rangeSessions.deletedAt),
					selection.from ? gte(shots.firedAt, selection.from) : undefined,
					selection.to ? lte(shots.firedAt, selection.to) : undefined
				);
	let after: { sessionId: number; sequence: number } | null = null;
	let headerSent = false;
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			if (!headerSent) {
				headerSent = true;
				controller.enqueue(encoder.encode(csvLine(EXPORT_HEADER)));
				return;
			}
			const rows = await db
				.select(row)
				.from(shots)
				.innerJoin(rangeSessions, eq(rangeSessions.id, shots.sessionId))
				.innerJoin(rigs, eq(rigs.id, rangeSessions.rigId))
				.innerJoin(projectiles, eq(projectiles.id, rangeSessions.projectileId))
				.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
				.where(
					and(
						filter,
						isNull(shots.deletedAt),
						after ? sql`(${shots.sessionId}, ${shots.sequence}) > (${after.sessionId}, ${after.sequence})` : undefined
					)
				)
				.orderBy(asc(shots.sessionId), asc(shots.sequence))
				.limit(EXPORT_PAGE);
			if (rows.length > 0) {
				controller.enqueue(encoder.encode(rows.map(exportLine).join('')));
				const last = rows[rows.length - 1];
				after = { sessionId: last.shot.sessionId, sequence: last.shot.sequence };
			}
			if (rows.length < EXPORT_PAGE) controller.close();
		}
	});
}

/** A file name for a download: letters, digits, dots and dashes only. */
export function downloadName(...parts: (string | number)[]) {
	return parts
		.map((p) => String(p).replace(/[^A-Za-z0-9.-]+/g, '-').replace(/^-+|-+$/g, ''))
		.filter(Boolean)
		.join('-');
}

const DATE_ONLY = /^(\d{4})-(\d{2})-(\d{2})$/;
const DATE_TIME = /^\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}(?::\d{2}(?:\.\d{1,3})?)?(?:Z|[+-]\d{2}:?\d{2})?$/i;

/** A date (a whole UTC day) or an ISO 8601 date-time, or a 400 naming the parameter. */
function dateParam(url: URL, name: 'from' | 'to'): Date | null {
	const raw = url.searchParams.get(name)?.trim() ?? '';
	if (raw === '') return null;
	const day = DATE_ONLY.exec(raw);
	let ms = Number.NaN;
	if (day) {
		const start = Date.UTC(+day[1], +day[2] - 1, +day[3]);
		const check = new Date(start);
		if (check.getUTCFullYear() === +day[1] && check.getUTCMonth() === +day[2] - 1 && check.getUTCDate() === +day[3])
			ms = name === 'from' ? start : start + 24 * 3600 * 1000 - 1;
	} else if (DATE_TIME.test(raw)) {
		// Without a zone the time is UTC, like everywhere in the app.
		ms = Date.parse(/(Z|[+-]\d{2}:?\d{2})$/i.test(raw) ? raw.replace(' ', 'T') : `${raw.replace(' ', 'T')}Z`);
	}
	if (!Number.isFinite(ms))
		error(400, { message: `URL parameter "${name}" must be a date (2026-03-02) or a date and time (2026-03-02T14:00:00Z); got "${raw}".`, issues: [{ path: name, message: 'Not a date.' }] });
	return new Date(ms);
}

/** ?from and ?to of a date range: a date means the whole (UTC) day; "from" after "to" is refused. */
export function dateRangeParams(url: URL): { from: Date | null; to: Date | null } {
	const from = dateParam(url, 'from');
	const to = dateParam(url, 'to');
	if (from && to && from > to)
		error(400, { message: `URL parameter "to" (${url.searchParams.get('to')}) lies before "from" (${url.searchParams.get('from')}).`, issues: [{ path: 'to', message: 'Before "from".' }] });
	return { from, to };
}
