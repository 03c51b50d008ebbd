// Rig health for leads (issue 8): per rig in service, the model bias and dispersion of each
// session over time (reconcile.rigStatistics), drift flags, the age of each approved calibration,
// and an attention status (attention.ts) so one glance tells which rig needs looking at.
import { asc, isNull } from 'drizzle-orm';
import { formatQuantity, type Prefs } from '$lib/format';
import { db } from '../db';
import { projectiles, rigs } from '../db/schema';
import { rigStatistics, type Executor } from '../reconcile';
import { assessRig, LEVEL_LABEL, type RigAttention } from './attention';

export interface SessionHealthLine {
	id: number;
	title: string;
	startedAt: Date;
	projectileId: number;
	projectileName: string;
	shots: number;
	biasPercent: { mean: number; lower: number | null; upper: number | null } | null;
	biasMps: number | null;
	uncalibrated: boolean;
	calibrationIds: number[];
	cepM: number | null;
	/** SD of the measured muzzle speeds (includes any planned change of fill pressure in a sweep). */
	speedSdMps: number | null;
	/** SD of the muzzle-speed residuals: the shot-to-shot scatter about the model, sweeps included. */
	residualSdMps: number | null;
	driftFlagged: boolean;
	/** Residual kinds whose drift test flagged (muzzle speed, downrange speed, impact x/y). */
	driftKinds: string[];
}

export interface RigHealth {
	rig: { id: number; name: string; ratedPressurePa: number };
	attention: RigAttention;
	calibrations: { projectileId: number; projectileName: string; calibrationId: number | null; approvedAt: Date | null; ageDays: number | null }[];
	/** Oldest first. */
	sessions: SessionHealthLine[];
}

const DRIFT_KIND_LABEL: Record<string, string> = {
	muzzleSpeed: 'muzzle speed',
	downrangeSpeed: 'downrange speed',
	impactX: 'impact x',
	impactY: 'impact y'
};

/** Every rig in service, those needing attention first. */
export async function rigHealth(prefs: Prefs, now = new Date(), tx: Executor = db): Promise<RigHealth[]> {
	const [rigRows, projectileRows] = await Promise.all([
		tx.select({ id: rigs.id, name: rigs.name, ratedPressurePa: rigs.ratedPressurePa }).from(rigs).where(isNull(rigs.deletedAt)).orderBy(asc(rigs.name)),
		tx.select({ id: projectiles.id, name: projectiles.name }).from(projectiles)
	]);
	const projectileName = new Map(projectileRows.map((p) => [p.id, p.name]));
	const all = await Promise.all(rigRows.map((rig) => rigStatistics(tx, rig.id, { now })));
	const health = rigRows.map((rig, i): RigHealth => {
		const stats = all[i];
		const sessions: SessionHealthLine[] = stats.sessions.map((s) => ({
			id: s.session.id,
			title: s.session.title,
			startedAt: s.session.startedAt,
			projectileId: s.session.projectileId,
			projectileName: projectileName.get(s.session.projectileId) ?? `Projectile ${s.session.projectileId}`,
			shots: s.counts.shots,
			biasPercent: s.bias.muzzleSpeedPercent,
			biasMps: s.bias.muzzleSpeed.mean,
			uncalibrated: s.predictionsFrom.uncalibrated,
			calibrationIds: s.predictionsFrom.calibrationIds,
			cepM: s.group.cepExact,
			speedSdMps: s.speed.muzzle.sd,
			// SE of the mean is SD/√n (stats/trend.ts meanWithInterval), so SD = SE·√n.
			residualSdMps: s.bias.muzzleSpeed.standardError === null ? null : s.bias.muzzleSpeed.standardError * Math.sqrt(s.bias.muzzleSpeed.n),
			driftFlagged: s.drift.flagged,
			driftKinds: (['muzzleSpeed', 'downrangeSpeed', 'impactX', 'impactY'] as const)
				.filter((k) => s.drift[k].flagged)
				.map((k) => DRIFT_KIND_LABEL[k])
		}));
		const attention = assessRig(
			sessions.map((s) => ({
				projectileId: s.projectileId,
				projectileName: s.projectileName,
				startedAt: s.startedAt,
				biasPercent: s.biasPercent,
				uncalibrated: s.uncalibrated,
				driftFlagged: s.driftFlagged,
				cepM: s.cepM
			})),
			stats.calibrations,
			now,
			(m) => formatQuantity('length', m, prefs, { small: true })
		);
		return { rig, attention, calibrations: stats.calibrations, sessions };
	});
	return health.sort((a, b) => LEVEL_LABEL[a.attention.level].rank - LEVEL_LABEL[b.attention.level].rank || a.rig.name.localeCompare(b.rig.name));
}
