// The reads behind the calibration pages, rig health and the setup sheet (issue 8), against the
// real MariaDB: a scratch database with the demo lab seeded into it (src/lib/server/db/seed.ts),
// whose rig H2 is uncalibrated with the 45 mm ice ball and loses efficiency over the campaign.
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isHttpError } from '@sveltejs/kit';
import { prefsFor } from '../../src/lib/format';
import { predictShot } from '../../src/lib/physics/launcher';
import { seedDemo } from '../../src/lib/server/db/seed';
import { projectiles, rangeSessions, rigs, testPlans, users } from '../../src/lib/server/db/schema';
import { approveCalibration, calibrationInForce, fitCalibration, ReconcileError } from '../../src/lib/server/reconcile';
import { calibrationDetail, calibrationPairs, pairView, resolveShotRefs } from '../../src/lib/server/calibrations';
import { rigHealth } from '../../src/lib/server/rig-health';
import { setupSheet, setupChoices } from '../../src/lib/server/setup-sheet';
import { setupSheetInput } from '../../src/lib/schemas/setup-sheet';
import { scratchDatabase } from '../support/db';

let scratch: Awaited<ReturnType<typeof scratchDatabase>>;
const db = () => scratch.db;
const NOW = new Date('2026-11-30T12:00:00.000Z');
const prefs = prefsFor(null);
const ids = { h1: 0, h2: 0, ice25: 0, ice45: 0, plan45: 0, analyst: 0, lead: 0, sessions45: [] as number[] };

beforeAll(async () => {
	scratch = await scratchDatabase();
	await seedDemo(db(), NOW);
	const [rigRows, projectileRows, planRows, userRows] = await Promise.all([
		db().select().from(rigs),
		db().select().from(projectiles),
		db().select().from(testPlans),
		db().select().from(users)
	]);
	ids.h1 = rigRows.find((r) => r.name.startsWith('H1'))!.id;
	ids.h2 = rigRows.find((r) => r.name.startsWith('H2'))!.id;
	ids.ice25 = projectileRows.find((p) => p.name === 'Ice ball 25 mm')!.id;
	ids.ice45 = projectileRows.find((p) => p.name === 'Ice ball 45 mm')!.id;
	ids.plan45 = planRows.find((p) => p.name === 'Hail 45 mm at 30.7 m/s')!.id;
	ids.analyst = userRows.find((u) => u.role === 'analyst')!.id;
	ids.lead = userRows.find((u) => u.role === 'lead')!.id;
	ids.sessions45 = (
		await db()
			.select({ id: rangeSessions.id })
			.from(rangeSessions)
			.where(and(eq(rangeSessions.rigId, ids.h2), eq(rangeSessions.projectileId, ids.ice45)))
	).map((s) => s.id);
}, 120_000);

afterAll(async () => {
	await scratch?.drop();
});

const sheetInput = (over: Record<string, unknown> = {}) =>
	setupSheetInput.parse({
		testPlanId: ids.plan45,
		rigId: ids.h2,
		projectileId: ids.ice45,
		launchHeightM: 1.2,
		aimHeightM: 1.2,
		temperatureC: 15,
		pressurePa: 101_325,
		relativeHumidity: 0.5,
		...over
	});

describe('the calibration pages', () => {
	it('list every fired pair with its approved calibration and drafts (demo: H1 approved, H2 + nylon a draft)', async () => {
		// The seed approves at the wall-clock time (its sessions are dated from NOW).
		const pairs = await calibrationPairs(db(), new Date());
		const h1 = pairs.find((p) => p.rigId === ids.h1 && p.projectileId === ids.ice25)!;
		expect(h1.approved).not.toBeNull();
		expect(h1.approved!.ageDays).toBeGreaterThanOrEqual(0);
		const h2 = pairs.find((p) => p.rigId === ids.h2 && p.projectileId === ids.ice45)!;
		expect(h2).toMatchObject({ approved: null, drafts: 0, sessions: 2 });
		expect(pairs.some((p) => p.rigId === ids.h2 && p.drafts === 1)).toBe(true);
	});

	it('start the fit form with every session of the pair and C_D when there are downrange speeds', async () => {
		const view = await pairView(ids.h2, ids.ice45, {}, db());
		expect(view.form.sessionIds.sort()).toEqual([...ids.sessions45].sort());
		expect(view.form.parameters).toEqual(['dragCoefficient']);
		expect(view.sessions.every((s) => s.withDownrangeSpeed > 0 && s.shots > 0)).toBe(true);
		await expect(pairView(999_999, ids.ice45, {}, db())).rejects.toSatisfy((e) => isHttpError(e, 404));
	});

	it('find a shot by session and number, and say which reference names none', async () => {
		const found = await resolveShotRefs([{ sessionId: ids.sessions45[0], sequence: 3 }], db());
		expect(found.ok).toBe(true);
		const missing = await resolveShotRefs([{ sessionId: ids.sessions45[0], sequence: 3 }, { sessionId: ids.sessions45[0], sequence: 9999 }], db());
		expect(missing).toEqual({ ok: false, index: 1 });
	});

	it('redraw a draft’s residuals exactly as the fit saw them: same shots, same RMS per kind', async () => {
		const { calibration, report } = await fitCalibration(db(), {
			rigId: ids.h2,
			projectileId: ids.ice45,
			sessionIds: ids.sessions45,
			parameters: ['efficiency', 'dragCoefficient'],
			exclusions: [],
			userId: ids.analyst
		});
		const detail = await calibrationDetail(ids.h2, ids.ice45, calibration.id, prefs, db());
		expect(detail.residuals.length).toBe(report.summary.nUsed.shots);
		const rms = (xs: number[]) => Math.sqrt(xs.reduce((s, v) => s + v * v, 0) / xs.length);
		const muzzle = detail.residuals.flatMap((r) => (r.muzzle ? [r.muzzle.residual] : []));
		const downrange = detail.residuals.flatMap((r) => (r.downrange ? [r.downrange.residual] : []));
		const impact = detail.residuals.flatMap((r) => (r.impact ? [r.impact.residualY] : []));
		expect(rms(muzzle)).toBeCloseTo(report.summary.rmsByKind.muzzleSpeed!, 9);
		expect(rms(downrange)).toBeCloseTo(report.summary.rmsByKind.downrangeSpeed!, 9);
		expect(rms(impact)).toBeCloseTo(report.summary.rmsByKind.impactHeight!, 9);
		// The model curve passes through the per-shot predictions at the shots' own ambient pressure.
		const eta = detail.parameters.find((p) => p.key === 'eta0')!;
		expect(eta).toMatchObject({ status: 'fitted' });
		expect(eta.lower!).toBeLessThan(eta.value!);
		expect(detail.curve.points.length).toBeGreaterThan(10);
		expect(detail.curve.points.every((p) => p.upper > p.speedMps && p.lower < p.speedMps)).toBe(true);
		expect(detail.correlation.labels).toEqual(['η0', 'C_D']);
		// Another pair's URL does not show it.
		await expect(calibrationDetail(ids.h1, ids.ice25, calibration.id, prefs, db())).rejects.toSatisfy((e) => isHttpError(e, 404));
	});

	it('report an undetermined parameter with what data would determine it', async () => {
		const { calibration } = await fitCalibration(db(), {
			rigId: ids.h2,
			projectileId: ids.ice45,
			sessionIds: [ids.sessions45[0]],
			parameters: ['efficiency', 'pressureSlope'],
			exclusions: [],
			userId: ids.analyst
		});
		const detail = await calibrationDetail(ids.h2, ids.ice45, calibration.id, prefs, db());
		const slope = detail.parameters.find((p) => p.key === 'eta1')!;
		expect(slope.status).toBe('not-determined');
		expect(slope.advice).toMatch(/wider range of fill pressures/);
	});
});

describe('the setup sheet', () => {
	let uncalibratedFill = 0;

	it('before any calibration: nominal values, marked uncalibrated, on the plan’s speed and aim point', async () => {
		const r = await setupSheet(db(), sheetInput(), prefs);
		if (!r.ok) throw new Error(r.message);
		const s = r.sheet;
		expect(s.calibration).toMatchObject({ status: 'uncalibrated', calibrationId: null });
		expect(s.solution.targetSpeedMps).toBeCloseTo(30.7, 5);
		expect(Math.abs(s.solution.impact.heightM)).toBeLessThan(1e-5);
		expect(s.solution.fillGaugePa).toBeLessThan(s.rig.ratedPressurePa);
		expect(s.trajectory.at(-1)!.downrangeM).toBeCloseTo(6, 9);
		expect(s.chance).not.toBeNull();
		for (const c of [s.chance!.speed!, s.chance!.impact!, s.chance!.both!]) {
			expect(c.probability).toBeGreaterThanOrEqual(0);
			expect(c.standardError).toBeCloseTo(Math.sqrt((c.probability * (1 - c.probability)) / s.chance!.samples), 12);
		}
		expect(s.chance!.both!.probability).toBeLessThanOrEqual(Math.min(s.chance!.speed!.probability, s.chance!.impact!.probability));
		uncalibratedFill = s.solution.fillGaugePa;
	});

	it('after a lead approves a calibration: uses it, and the fill pressure follows it', async () => {
		const { calibration } = await fitCalibration(db(), {
			rigId: ids.h2,
			projectileId: ids.ice45,
			sessionIds: ids.sessions45,
			parameters: ['efficiency', 'dragCoefficient'],
			exclusions: [],
			userId: ids.analyst
		});
		await approveCalibration(db(), calibration.id, { id: ids.lead, role: 'lead' });
		const r = await setupSheet(db(), sheetInput(), prefs);
		if (!r.ok) throw new Error(r.message);
		expect(r.sheet.calibration).toMatchObject({ status: 'calibrated', calibrationId: calibration.id });
		expect(r.sheet.solution.fillGaugePa).not.toBeCloseTo(uncalibratedFill, 0);
		// Independently: the approved model at the solved fill and elevation meets the plan's speed.
		const inForce = await calibrationInForce(db(), ids.h2, ids.ice45);
		const check = predictShot(inForce.model, {
			rig: { reservoirM3: inForce.rig.reservoirM3, deadM3: inForce.rig.deadM3, boreDiameterM: inForce.rig.boreDiameterM, travelM: inForce.rig.travelM },
			projectile: { massKg: inForce.projectile.massKg, diameterM: inForce.projectile.diameterM },
			fillGaugePa: r.sheet.solution.fillGaugePa,
			session: {
				targetDistanceM: 6,
				elevationDeg: r.sheet.solution.elevationDeg,
				launchHeightM: 1.2,
				aimHeightM: 1.2,
				airDensityKgM3: r.sheet.conditions.airDensityKgM3,
				ambientPa: 101_325
			}
		});
		if (!check.ok) throw new Error(check.reason);
		expect(check.impact.speedMps).toBeCloseTo(30.7, 5);
	});

	it('refuses a plan that needs more than the rig’s rated working pressure, in the caller’s units', async () => {
		const [plan] = await db()
			.insert(testPlans)
			.values({ name: 'IT 300 m/s at the muzzle', speedAt: 'muzzle', requiredSpeedMps: 300, speedTolerancePct: 5, impactToleranceM: 0.02, targetDistanceM: 6, shotsRequired: 3 })
			.$returningId();
		const r = await setupSheet(db(), sheetInput({ testPlanId: plan.id }), prefsFor({ pressure: 'psi', speed: 'ft/s' }));
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.code).toBe('above-rated-pressure');
		expect(r.field).toBe('testPlanId');
		// H2 is rated 10 bar = 145.0 psi; 300 m/s = 984.3 ft/s.
		expect(r.message).toMatch(/^Refused: 984\.3 ft\/s at the muzzle needs more than H2 .* rated working pressure of 145\.0 psi/);
	});

	it('answers 404 for an unknown rig and refuses a deleted projectile', async () => {
		await expect(setupSheet(db(), sheetInput({ rigId: 999_999 }), prefs)).rejects.toMatchObject({ status: 404, field: 'rigId' });
		const [p] = await db()
			.insert(projectiles)
			.values({ name: 'IT retired ball', massKg: 0.04, diameterM: 0.045, lengthM: 0.045, shape: 'sphere', nominalDragCoefficient: 0.47, deletedAt: NOW })
			.$returningId();
		const refused = setupSheet(db(), sheetInput({ projectileId: p.id }), prefs);
		await expect(refused).rejects.toBeInstanceOf(ReconcileError);
		await expect(refused).rejects.toMatchObject({ status: 400, field: 'projectileId' });
	});

	it('offers each plan with the rig and projectile of its latest session', async () => {
		const choices = await setupChoices(db());
		expect(choices.lastUse[ids.plan45]).toEqual({ rigId: ids.h2, projectileId: ids.ice45 });
		expect(choices.plans.some((p) => p.id === ids.plan45)).toBe(true);
	});
});

describe('rig health', () => {
	it('puts a rig with a significant bias first, with the word and the shape of its status', async () => {
		const health = await rigHealth(prefs, NOW, db());
		expect(health[0].attention.level).toBe('attention');
		expect(health[0].attention).toMatchObject({ word: 'Needs attention', shape: '▲' });
		const h1 = health.find((h) => h.rig.id === ids.h1)!;
		expect(h1.calibrations.find((c) => c.projectileId === ids.ice25)!.calibrationId).not.toBeNull();
		for (const h of health) {
			const dates = h.sessions.map((s) => new Date(s.startedAt).getTime());
			expect(dates).toEqual([...dates].sort((a, b) => a - b));
		}
		const anySession = health.flatMap((h) => h.sessions).find((s) => s.residualSdMps !== null)!;
		expect(anySession.residualSdMps).toBeGreaterThan(0);
	});
});
