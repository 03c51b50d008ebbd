// The end-to-end check of a calibration through the server, on the real MariaDB (issue 13; the
// campaigns and their protocol: shared/reference/campaigns/README.md). Each campaign is stored as a
// lab would have it — a rig, a projectile, the odd-numbered shots in one session and the even ones
// in another — then fitted with the automatic model choice on the odd session, approved by a lead,
// and the even shots' STORED predictions (written by the approval's recomputation) are compared
// with their measurements. The bounds are those of src/lib/physics/launcher/campaigns.spec.ts,
// which states where the targets are met and where not yet.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { randomUUID } from 'node:crypto';
import { eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAMPAIGN_FILES, campaignSds, type CampaignFile } from '../../src/lib/physics/launcher';
import { projectiles, rangeSessions, rigs, shotPredictions, shots, users } from '../../src/lib/server/db/schema';
import { approveCalibration, fitCalibration, summaryOf } from '../../src/lib/server/reconcile';
import { scratchDatabase } from '../support/db';

const DIR = path.resolve('..', 'shared', 'reference', 'campaigns');
const BOUNDS: Record<(typeof CAMPAIGN_FILES)[number], { speed: number; impact: number }> = {
	'pub-ice35.json': { speed: 1.45, impact: 2.5 },
	'pub-ice45.json': { speed: 1.3, impact: 1.6 },
	'pub-nylon40.json': { speed: 1.3, impact: 1.4 },
	'pub-steel20.json': { speed: 1.3, impact: 1.4 }
};

let scratch: Awaited<ReturnType<typeof scratchDatabase>>;
const people = { analyst: 0, lead: 0 };

beforeAll(async () => {
	scratch = await scratchDatabase();
	const [a] = await scratch.db.insert(users).values({ email: 'analyst@campaign.test', name: 'Campaign analyst', role: 'analyst' }).$returningId();
	const [l] = await scratch.db.insert(users).values({ email: 'lead@campaign.test', name: 'Campaign lead', role: 'lead' }).$returningId();
	people.analyst = a.id;
	people.lead = l.id;
}, 60_000);

afterAll(async () => {
	await scratch?.drop();
});

async function store(c: CampaignFile) {
	const db = scratch.db;
	const [rig] = await db
		.insert(rigs)
		.values({ name: `Rig of ${c.campaign}`, ...c.rig, ratedPressurePa: c.rig.ratedGaugePa, valveType: 'unknown', nominalEfficiency: 0.6 })
		.$returningId();
	const [projectile] = await db
		.insert(projectiles)
		.values({ name: `Ball of ${c.campaign}`, massKg: c.projectile.massKg, diameterM: c.projectile.diameterM, lengthM: c.projectile.diameterM, shape: 'sphere', nominalDragCoefficient: 0.47 })
		.$returningId();
	const s = c.session;
	const sessionIds: number[] = [];
	for (const parity of [1, 0]) {
		const [session] = await db
			.insert(rangeSessions)
			.values({
				title: `${c.campaign} ${parity ? 'odd' : 'even'} shots`,
				rigId: rig.id,
				projectileId: projectile.id,
				status: 'closed',
				startedAt: new Date('2026-11-20T09:00:00Z'),
				targetDistanceM: s.targetDistanceM,
				elevationDeg: s.elevationDeg,
				launchHeightM: s.launchHeightM,
				aimHeightM: s.aimHeightM,
				downrangeChronoM: s.downrangeChronoM ?? null,
				temperatureC: s.temperatureC,
				pressurePa: s.pressurePa,
				relativeHumidity: s.relativeHumidity,
				windXMps: s.windXMps,
				windZMps: s.windZMps,
				createdBy: people.analyst
			})
			.$returningId();
		sessionIds.push(session.id);
		const rows = c.shots
			.filter((x) => x.sequence % 2 === parity)
			.map((x, i) => ({
				sessionId: session.id,
				sequence: i + 1,
				clientUuid: randomUUID(),
				firedAt: new Date(Date.parse('2026-11-20T09:00:00Z') + x.sequence * 60_000),
				fillGaugePa: x.fillGaugePa,
				muzzleSpeedMps: x.muzzleSpeedMps,
				downrangeSpeedMps: x.downrangeSpeedMps ?? null,
				impactXM: x.miss ? null : x.impactXM,
				impactYM: x.miss ? null : x.impactYM,
				miss: x.miss,
				enteredBy: people.analyst
			}));
		await db.insert(shots).values(rows);
	}
	return { rigId: rig.id, projectileId: projectile.id, odd: sessionIds[0], even: sessionIds[1] };
}

describe('calibration campaigns through the server: fit the odd session, approve, read the even shots’ stored predictions', () => {
	for (const name of CAMPAIGN_FILES) {
		it(`${name}: held-out RMS of the stored residuals against the file's noise floor`, async () => {
			const c = JSON.parse(readFileSync(path.join(DIR, name), 'utf8')) as CampaignFile;
			const pair = await store(c);
			const fit = await fitCalibration(scratch.db, {
				rigId: pair.rigId,
				projectileId: pair.projectileId,
				sessionIds: [pair.odd],
				model: 'auto',
				measurementSds: campaignSds(c),
				exclusions: [],
				userId: people.analyst
			});
			const summary = summaryOf(fit.calibration);
			expect(summary.converged, summary.message).toBe(true);
			expect(summary.comparison?.proposed).toBeTruthy();
			await approveCalibration(scratch.db, fit.calibration.id, { id: people.lead, role: 'lead' });

			const stored = await scratch.db
				.select({ muzzle: shotPredictions.muzzleResidualMps, impact: shotPredictions.impactYResidualM, calibrationId: shotPredictions.calibrationId, error: shotPredictions.predictionError })
				.from(shotPredictions)
				.innerJoin(shots, eq(shots.id, shotPredictions.shotId))
				.where(inArray(shots.sessionId, [pair.even]));
			expect(stored.length).toBe(c.shots.filter((x) => x.sequence % 2 === 0).length);
			expect(stored.every((r) => r.calibrationId === fit.calibration.id && r.error === null)).toBe(true);
			const rms = (xs: number[]) => Math.sqrt(xs.reduce((s, v) => s + v * v, 0) / xs.length);
			const speedRatio = rms(stored.flatMap((r) => (r.muzzle === null ? [] : [r.muzzle]))) / c.noiseFloor.muzzleSpeedMps;
			const impactRatio = rms(stored.flatMap((r) => (r.impact === null ? [] : [r.impact]))) / c.noiseFloor.impactYM;
			console.log(`${name} (server, stored predictions): proposed ${summary.comparison?.proposed}; speed ${speedRatio.toFixed(3)}×, impact ${impactRatio.toFixed(3)}× the floor`);
			expect(speedRatio).toBeLessThanOrEqual(BOUNDS[name].speed);
			expect(impactRatio).toBeLessThanOrEqual(BOUNDS[name].impact);
		}, 300_000);
	}
});
