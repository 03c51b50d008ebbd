// Which rig needs attention (issue 8, "one glance tells which rig needs attention"): a pure rule
// over a rig's recent session statistics and the age of its approved calibrations. Each level has
// a word and a shape so the status never rests on colour alone.
//
// The thresholds are the lab's judgement, not physics; they are named here so a lead can see and
// change them in one place:
// - BIAS_ATTENTION_PCT: a muzzle-speed bias of 3 % moves a 30 m/s plan by 0.9 m/s, most of a
//   typical ±5 % tolerance once the rig's own scatter is added, so the next setup sheet would be
//   wrong; BIAS_WATCH_PCT (1 %) is worth a look but not a stop.
// - A bias counts only when its 95 % interval excludes zero (otherwise it is scatter).
// - A bias that trends across sessions (Student-t test of the slope, stats/trend.ts) is the drift
//   story of seal wear or a slow leak: it needs attention even while each session is within limits.
// - CEP_GROWTH_RATIO: a group 1.5× wider than the rig's usual is a loose mount or a damaged barrel.
// - CALIBRATION_MAX_AGE_DAYS: half a year without a new calibration is the lab's practice.
import { linearTrend } from '$lib/physics/stats/trend';

export const BIAS_ATTENTION_PCT = 3;
export const BIAS_WATCH_PCT = 1;
export const CEP_GROWTH_RATIO = 1.5;
export const CALIBRATION_MAX_AGE_DAYS = 180;
/** Sessions older than this no longer describe the rig as it is. */
export const RECENT_DAYS = 60;
const DAY_MS = 24 * 3600 * 1000;

export type AttentionLevel = 'attention' | 'watch' | 'good' | 'idle';

/** Word and shape of each level (shape characters are also read out by screen readers as text). */
export const LEVEL_LABEL: Record<AttentionLevel, { word: string; shape: string; rank: number }> = {
	attention: { word: 'Needs attention', shape: '▲', rank: 0 },
	watch: { word: 'Watch', shape: '◆', rank: 1 },
	good: { word: 'In good order', shape: '●', rank: 2 },
	idle: { word: 'No recent sessions', shape: '○', rank: 3 }
};

export interface SessionHealth {
	projectileId: number;
	projectileName: string;
	startedAt: Date;
	/** Muzzle-speed bias in % of the mean measured speed, with its 95 % interval. */
	biasPercent: { mean: number; lower: number | null; upper: number | null } | null;
	uncalibrated: boolean;
	driftFlagged: boolean;
	cepM: number | null;
}

export interface CalibrationAge {
	projectileId: number;
	projectileName: string;
	calibrationId: number | null;
	ageDays: number | null;
}

export interface Finding {
	level: Exclude<AttentionLevel, 'good' | 'idle'>;
	text: string;
}

export interface RigAttention {
	level: AttentionLevel;
	word: string;
	shape: string;
	findings: Finding[];
	/** One line: the word and the findings, e.g. "Needs attention: bias −6.1 % with Ice ball 45 mm (uncalibrated); drift flagged". */
	summary: string;
}

const pct = (v: number) => `${v > 0 ? '+' : v < 0 ? '−' : ''}${Math.abs(v).toFixed(1)} %`;

function significant(b: NonNullable<SessionHealth['biasPercent']>) {
	return b.lower !== null && b.upper !== null && (b.lower > 0 || b.upper < 0);
}

/**
 * The attention status of a rig from its sessions (any order) and calibration ages. `formatLength`
 * writes a CEP in the reader's units.
 */
export function assessRig(
	sessions: readonly SessionHealth[],
	calibrations: readonly CalibrationAge[],
	now: Date,
	formatLength: (m: number) => string = (m) => `${(m * 1000).toFixed(1)} mm`
): RigAttention {
	const recent = sessions.filter((s) => now.getTime() - s.startedAt.getTime() <= RECENT_DAYS * DAY_MS);
	const findings: Finding[] = [];
	const byProjectile = new Map<number, SessionHealth[]>();
	for (const s of [...sessions].sort((a, b) => a.startedAt.getTime() - b.startedAt.getTime()))
		byProjectile.set(s.projectileId, [...(byProjectile.get(s.projectileId) ?? []), s]);

	for (const [projectileId, list] of byProjectile) {
		const latest = list.at(-1)!;
		if (!recent.includes(latest)) continue;
		const name = latest.projectileName;
		const b = latest.biasPercent;
		if (b && significant(b) && Math.abs(b.mean) >= BIAS_WATCH_PCT) {
			findings.push({
				level: Math.abs(b.mean) >= BIAS_ATTENTION_PCT ? 'attention' : 'watch',
				text: `bias ${pct(b.mean)} with ${name}${latest.uncalibrated ? ' (uncalibrated)' : ''}`
			});
		}
		if (latest.driftFlagged) findings.push({ level: 'watch', text: `drift flagged in the latest session with ${name}` });

		const withBias = list.filter((s) => s.biasPercent !== null);
		if (withBias.length >= 3) {
			const trend = linearTrend(
				withBias.map((s) => s.biasPercent!.mean),
				withBias.map((s) => s.startedAt.getTime() / DAY_MS)
			);
			if (trend.driftFlag && trend.slope !== null)
				findings.push({ level: 'attention', text: `bias with ${name} trending ${pct(trend.slope * 7)} per week across sessions` });
		}

		const earlierCeps = list.slice(0, -1).flatMap((s) => (s.cepM === null ? [] : [s.cepM]));
		if (latest.cepM !== null && earlierCeps.length > 0) {
			const sorted = [...earlierCeps].sort((x, y) => x - y);
			const usual = sorted[Math.floor((sorted.length - 1) / 2)];
			if (usual > 0 && latest.cepM > CEP_GROWTH_RATIO * usual)
				findings.push({ level: 'watch', text: `CEP with ${name} grew to ${formatLength(latest.cepM)} from a usual ${formatLength(usual)}` });
		}

		const calibration = calibrations.find((c) => c.projectileId === projectileId);
		if (!calibration || calibration.calibrationId === null) findings.push({ level: 'watch', text: `no approved calibration with ${name}` });
	}
	for (const c of calibrations)
		if (c.ageDays !== null && c.ageDays > CALIBRATION_MAX_AGE_DAYS && byProjectile.has(c.projectileId))
			findings.push({ level: 'watch', text: `calibration with ${c.projectileName} is ${Math.floor(c.ageDays)} days old` });

	const level: AttentionLevel = findings.some((f) => f.level === 'attention')
		? 'attention'
		: findings.length > 0
			? 'watch'
			: recent.length > 0
				? 'good'
				: 'idle';
	// Most serious first, so the one-line summary leads with what matters.
	findings.sort((a, b) => LEVEL_LABEL[a.level].rank - LEVEL_LABEL[b.level].rank);
	const { word, shape } = LEVEL_LABEL[level];
	return { level, word, shape, findings, summary: findings.length ? `${word}: ${findings.map((f) => f.text).join('; ')}` : word };
}
