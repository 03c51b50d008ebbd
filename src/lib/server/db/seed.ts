// The invented demo lab, "Northfold Impact Range": people, rigs, projectiles, test plans,
// range sessions and several hundred shots. Shots come from the physics module (muzzle speed,
// flight) with seeded noise, so they look like a real campaign: a rig's true efficiency differs
// from its nominal one, one rig slowly loses efficiency (seal wear), impacts scatter around the
// aim point. Same seed → same data. Idempotent: does nothing when the lab is already there.
import { count } from 'drizzle-orm';
import { hashPassword } from '../accounts/passwords';
import { airDensity, createRandom, flyToPlane, muzzleSpeed, type Random } from '../../physics';
import { fillPressureForMuzzleSpeed } from '../../physics/internal';
import { DEMO_PASSWORD, DEMO_USERS } from '../../../../scripts/lib/demo-users.mjs';
import type { Database } from './client';
import { projectiles, rangeSessions, rigs, shots, testPlans, users } from './schema';
import { approveCalibration, fitCalibration, recomputePredictions } from '../reconcile';

const SEED = 20261202;
const DAY_MS = 24 * 3600 * 1000;
const BAR = 1e5;

type RigSpec = typeof rigs.$inferInsert & {
	/** The "true" rig the shots come from, unknown to the app until it calibrates. */
	truth: {
		efficiency: number;
		slopePerBar: number;
		wearPerWeek: number;
		elevationBiasDeg: number;
		impactSdM: number;
		/** Shot-to-shot variation of the actual fill pressure, Pa. */
		fillSdPa: number;
	};
};

const RIGS: RigSpec[] = [
	{
		name: 'H1 · 25 mm hail launcher',
		reservoirM3: 2.0e-3,
		deadM3: 0.05e-3,
		boreDiameterM: 0.0254,
		travelM: 1.2,
		ratedPressurePa: 8 * BAR,
		valveType: 'Pilot-operated diaphragm valve',
		nominalEfficiency: 0.6,
		notes: 'Ice-ball barrel with PTFE sleeve. Reservoir proof-tested hydrostatically to 1.5× rating.',
		truth: { efficiency: 0.66, slopePerBar: -0.012, wearPerWeek: 0, elevationBiasDeg: 0.05, impactSdM: 0.006, fillSdPa: 300 }
	},
	{
		name: 'H2 · 45 mm hail launcher',
		reservoirM3: 6.0e-3,
		deadM3: 0.12e-3,
		boreDiameterM: 0.0455,
		travelM: 1.8,
		ratedPressurePa: 10 * BAR,
		valveType: 'Quick-exhaust piston valve',
		nominalEfficiency: 0.6,
		notes: 'Second chronograph gate fitted 0.5 m in front of the specimen frame.',
		truth: { efficiency: 0.57, slopePerBar: -0.015, wearPerWeek: -0.002, elevationBiasDeg: -0.1, impactSdM: 0.009, fillSdPa: 500 }
	},
	{
		name: 'P3 · 60 mm product-impact cannon',
		reservoirM3: 20e-3,
		deadM3: 0.4e-3,
		boreDiameterM: 0.0605,
		travelM: 2.5,
		ratedPressurePa: 12 * BAR,
		valveType: 'Pneumatically actuated ball valve',
		nominalEfficiency: 0.55,
		notes: 'Used for packaging drop-replacement tests with foam-core impactors.',
		truth: { efficiency: 0.51, slopePerBar: -0.008, wearPerWeek: 0, elevationBiasDeg: 0.03, impactSdM: 0.014, fillSdPa: 1000 }
	}
];

type ProjectileSpec = typeof projectiles.$inferInsert & { trueDragCoefficient: number };

const PROJECTILES: ProjectileSpec[] = [
	// Ice-ball masses follow ρ_ice ≈ 0.92 g/cm³ (reference sheet §8); smooth-sphere C_D ≈ 0.47
	// (Hoerner, Fluid-Dynamic Drag, 1965, from memory) as the nominal value.
	{ name: 'Ice ball 25 mm', massKg: 7.53e-3, diameterM: 0.025, lengthM: 0.025, shape: 'sphere', nominalDragCoefficient: 0.47, trueDragCoefficient: 0.5, notes: 'Moulded, stored at −4 °C.' },
	{ name: 'Ice ball 45 mm', massKg: 43.9e-3, diameterM: 0.045, lengthM: 0.045, shape: 'sphere', nominalDragCoefficient: 0.47, trueDragCoefficient: 0.52, notes: 'Moulded, stored at −4 °C.' },
	{ name: 'Nylon sphere 45 mm', massKg: 54.4e-3, diameterM: 0.045, lengthM: 0.045, shape: 'sphere', nominalDragCoefficient: 0.47, trueDragCoefficient: 0.45, notes: 'Reusable proxy for rig checks.' },
	// Flat-faced cylinder, l/d = 1: C_D 0.91 (reference sheet §4, Matthews Fig. 5.13(b)).
	{ name: 'Foam-core impactor 60 mm', massKg: 0.18, diameterM: 0.06, lengthM: 0.06, shape: 'cylinder', nominalDragCoefficient: 0.91, trueDragCoefficient: 0.95, notes: 'Aluminium face plate on a foam core.' }
];

const PLANS = [
	{ name: 'Hail 25 mm at 23.0 m/s', speedAt: 'target' as const, requiredSpeedMps: 23.0, speedTolerancePct: 5, impactToleranceM: 0.015, targetDistanceM: 5, shotsRequired: 11, notes: 'Ice ball 25 mm, speed judged at the specimen; 11 impact locations.' },
	{ name: 'Hail 45 mm at 30.7 m/s', speedAt: 'target' as const, requiredSpeedMps: 30.7, speedTolerancePct: 5, impactToleranceM: 0.02, targetDistanceM: 6, shotsRequired: 11, notes: 'Ice ball 45 mm, speed judged at the specimen.' }
];

type SessionSpec = {
	title: string;
	rig: number;
	projectile: number;
	plan: number | null;
	daysAgo: number;
	shots: number;
	/** Required speed at the target, or a fill-pressure sweep for calibration (bar). */
	aim: { targetSpeedMps: number } | { sweepBar: [number, number] };
	distanceM: number;
	downrangeChronoM: number | null;
	conditions: { temperatureC: number; pressurePa: number; relativeHumidity: number; windXMps: number; windZMps: number };
	open?: boolean;
};

const SESSIONS: SessionSpec[] = [
	{ title: 'H1 pressure sweep, ice 25 mm', rig: 0, projectile: 0, plan: null, daysAgo: 38, shots: 48, aim: { sweepBar: [0.9, 3.2] }, distanceM: 5, downrangeChronoM: 4.5, conditions: { temperatureC: 6, pressurePa: 101_900, relativeHumidity: 0.7, windXMps: 0, windZMps: 0 } },
	{ title: 'H1 qualification run A', rig: 0, projectile: 0, plan: 0, daysAgo: 24, shots: 44, aim: { targetSpeedMps: 23 }, distanceM: 5, downrangeChronoM: 4.5, conditions: { temperatureC: 4, pressurePa: 100_800, relativeHumidity: 0.8, windXMps: -0.5, windZMps: 0.3 } },
	{ title: 'H2 pressure sweep, nylon proxy', rig: 1, projectile: 2, plan: null, daysAgo: 35, shots: 52, aim: { sweepBar: [1.0, 4.0] }, distanceM: 6, downrangeChronoM: 5.5, conditions: { temperatureC: 8, pressurePa: 101_300, relativeHumidity: 0.6, windXMps: 0, windZMps: 0 } },
	{ title: 'H2 hail 45 mm, panel batch 7', rig: 1, projectile: 1, plan: 1, daysAgo: 17, shots: 60, aim: { targetSpeedMps: 30.7 }, distanceM: 6, downrangeChronoM: 5.5, conditions: { temperatureC: 3, pressurePa: 99_900, relativeHumidity: 0.85, windXMps: 0.4, windZMps: -0.6 } },
	{ title: 'H2 hail 45 mm, panel batch 8', rig: 1, projectile: 1, plan: 1, daysAgo: 3, shots: 56, aim: { targetSpeedMps: 30.7 }, distanceM: 6, downrangeChronoM: 5.5, conditions: { temperatureC: 1, pressurePa: 102_200, relativeHumidity: 0.75, windXMps: 0, windZMps: 0.8 } },
	{ title: 'P3 impactor sweep', rig: 2, projectile: 3, plan: null, daysAgo: 29, shots: 40, aim: { sweepBar: [1.5, 5.5] }, distanceM: 12, downrangeChronoM: 10, conditions: { temperatureC: 11, pressurePa: 101_000, relativeHumidity: 0.55, windXMps: 0, windZMps: 0 } },
	{ title: 'P3 packaging drops, lot 42', rig: 2, projectile: 3, plan: null, daysAgo: 9, shots: 45, aim: { targetSpeedMps: 28 }, distanceM: 12, downrangeChronoM: null, conditions: { temperatureC: 9, pressurePa: 100_400, relativeHumidity: 0.65, windXMps: 1.2, windZMps: -0.4 } },
	{ title: 'H1 qualification run B', rig: 0, projectile: 0, plan: 0, daysAgo: 1, shots: 30, aim: { targetSpeedMps: 23 }, distanceM: 5, downrangeChronoM: 4.5, conditions: { temperatureC: 2, pressurePa: 101_500, relativeHumidity: 0.9, windXMps: 0, windZMps: 0.2 }, open: true }
];

const LAUNCH_HEIGHT_M = 1.2;
const AIM_HEIGHT_M = 1.2;
/** Measurement noise of the demo's instruments and the rigs' own scatter (invented). */
const SHOT_SPEED_SD_REL = 0.004;
/** How many weeks before "now" the campaign starts: wear is counted from there. */
const CAMPAIGN_WEEKS = 6;
const CHRONO_SD_MPS = 0.1;
const MISS_RATE = 0.02;

function launcher(rig: RigSpec, projectile: ProjectileSpec, ambientPa: number, efficiency: number) {
	return {
		ambientPa,
		reservoirM3: rig.reservoirM3,
		deadM3: rig.deadM3,
		boreDiameterM: rig.boreDiameterM,
		travelM: rig.travelM,
		massKg: projectile.massKg,
		efficiency
	};
}

/** Elevation (deg) that puts the nominal flight on the aim point: a few secant steps on flyToPlane. */
function aimElevation(speedMps: number, flight: Omit<Parameters<typeof flyToPlane>[0], 'speedMps' | 'elevationDeg'>) {
	const miss = (deg: number) => flyToPlane({ ...flight, speedMps, elevationDeg: deg }).heightM - AIM_HEIGHT_M;
	let a = 0;
	let b = 2;
	let fa = miss(a);
	let fb = miss(b);
	for (let i = 0; i < 20 && Math.abs(fb) > 1e-6; i++) {
		const c = b - (fb * (b - a)) / (fb - fa);
		a = b;
		fa = fb;
		b = c;
		fb = miss(b);
	}
	return Math.round(b * 100) / 100;
}

function round(value: number, digits: number) {
	const f = 10 ** digits;
	return Math.round(value * f) / f;
}

function sessionShots(spec: SessionSpec, rig: RigSpec, projectile: ProjectileSpec, random: Random, startedAt: Date) {
	const c = spec.conditions;
	const rho = airDensity({ temperatureC: c.temperatureC, pressurePa: c.pressurePa, relativeHumidity: c.relativeHumidity });
	const wear = rig.truth.wearPerWeek * (CAMPAIGN_WEEKS - spec.daysAgo / 7);
	const crewEfficiencyAt = (gaugePa: number) => rig.truth.efficiency + rig.truth.slopePerBar * (gaugePa / BAR - 3);
	const trueEfficiencyAt = (gaugePa: number) => crewEfficiencyAt(gaugePa) + wear;
	const k = (rho * projectile.trueDragCoefficient * Math.PI * projectile.diameterM ** 2) / (8 * projectile.massKg);

	// The crew's set point: dialled in on the range at the start of the campaign (they do not
	// know about later seal wear). Two fixed-point passes handle the pressure-dependent efficiency.
	const setPointFor = (muzzleMps: number) => {
		let pressurePa = 2 * BAR;
		for (let pass = 0; pass < 3; pass++) {
			const solved = fillPressureForMuzzleSpeed(launcher(rig, projectile, c.pressurePa, crewEfficiencyAt(pressurePa)), muzzleMps);
			if (solved.ok) pressurePa = solved.fillGaugePa;
		}
		return Math.round(pressurePa / 100) * 100;
	};
	const speedAt = (gaugePa: number, extraEfficiency = 0) => {
		const r = muzzleSpeed({ fillGaugePa: gaugePa, ...launcher(rig, projectile, c.pressurePa, crewEfficiencyAt(gaugePa) + extraEfficiency) });
		return r.ok ? r.speedMps : 0;
	};
	const setPointPa = 'targetSpeedMps' in spec.aim ? setPointFor(spec.aim.targetSpeedMps * Math.exp(k * spec.distanceM)) : 0;
	// The crew sights the rig in with a few shots: the elevation suits today's speed (wear included).
	const nominalSpeed =
		'targetSpeedMps' in spec.aim ? speedAt(setPointPa, wear) : speedAt(((spec.aim.sweepBar[0] + spec.aim.sweepBar[1]) / 2) * BAR, wear);
	const flight = {
		launchHeightM: LAUNCH_HEIGHT_M,
		targetDistanceM: spec.distanceM,
		massKg: projectile.massKg,
		diameterM: projectile.diameterM,
		dragCoefficient: projectile.trueDragCoefficient,
		airDensityKgM3: rho,
		wind: { xMps: c.windXMps, zMps: c.windZMps }
	};
	const elevationDeg = aimElevation(nominalSpeed, flight);

	const rows: (typeof shots.$inferInsert)[] = [];
	let firedAtMs = startedAt.getTime();
	for (let i = 0; i < spec.shots; i++) {
		firedAtMs += (90 + random.integer(60)) * 1000;
		const fillGaugePa =
			'sweepBar' in spec.aim
				? (spec.aim.sweepBar[0] + ((spec.aim.sweepBar[1] - spec.aim.sweepBar[0]) * (i % 8)) / 7) * BAR
				: setPointPa;
		const actualPa = fillGaugePa + random.normal(0, rig.truth.fillSdPa);
		const result = muzzleSpeed({ fillGaugePa: actualPa, ...launcher(rig, projectile, c.pressurePa, trueEfficiencyAt(actualPa)) });
		if (!result.ok) continue;
		const v0 = result.speedMps * (1 + random.normal(0, SHOT_SPEED_SD_REL));
		const elevation = elevationDeg + rig.truth.elevationBiasDeg;
		const atTarget = flyToPlane({ ...flight, speedMps: v0, elevationDeg: elevation });
		const atChrono = spec.downrangeChronoM
			? flyToPlane({ ...flight, targetDistanceM: spec.downrangeChronoM, speedMps: v0, elevationDeg: elevation })
			: null;
		const miss = random.next() < MISS_RATE || !atTarget.reached;
		rows.push({
			sessionId: 0,
			sequence: i + 1,
			clientUuid: seededUuid(random),
			firedAt: new Date(firedAtMs),
			fillGaugePa: round(fillGaugePa, 0),
			muzzleSpeedMps: round(v0 + random.normal(0, CHRONO_SD_MPS), 2),
			downrangeSpeedMps: atChrono?.reached ? round(atChrono.speedMps + random.normal(0, CHRONO_SD_MPS), 2) : null,
			impactXM: miss ? null : round(atTarget.lateralM + random.normal(0, rig.truth.impactSdM), 4),
			impactYM: miss ? null : round(atTarget.heightM - AIM_HEIGHT_M + random.normal(0, rig.truth.impactSdM), 4),
			miss,
			note: miss ? 'Missed the target face' : null
		});
	}
	return { rows, elevationDeg };
}

/** RFC 4122 version-4 layout from the seeded generator, so the demo is reproducible. */
function seededUuid(random: Random) {
	const hex = Array.from({ length: 32 }, () => random.integer(16).toString(16));
	hex[12] = '4';
	hex[16] = ((random.integer(4) + 8) as number).toString(16);
	const s = hex.join('');
	return `${s.slice(0, 8)}-${s.slice(8, 12)}-${s.slice(12, 16)}-${s.slice(16, 20)}-${s.slice(20)}`;
}

/** Seed the demo lab unless users already exist. Returns whether it seeded. */
export async function seedDemo(db: Database, now = new Date()): Promise<boolean> {
	const [existing] = await db.select({ n: count() }).from(users);
	if ((existing?.n ?? 0) > 0) return false;
	const random = createRandom(SEED);
	// The app's own cost: a cheaper demo hash would answer faster for known addresses than unknown ones.
	const passwordHash = await hashPassword(DEMO_PASSWORD);

	const ids = await db.transaction(async (tx) => {
		const userIds: Record<string, number> = {};
		for (const u of DEMO_USERS) {
			const [row] = await tx.insert(users).values({ ...u, role: u.role as never, passwordHash }).$returningId();
			userIds[u.role] = row.id;
		}
		const rigIds: number[] = [];
		for (const { truth: _truth, ...rig } of RIGS) rigIds.push((await tx.insert(rigs).values(rig).$returningId())[0].id);
		const projectileIds: number[] = [];
		for (const { trueDragCoefficient: _cd, ...p } of PROJECTILES)
			projectileIds.push((await tx.insert(projectiles).values(p).$returningId())[0].id);
		const planIds: number[] = [];
		for (const plan of PLANS)
			planIds.push((await tx.insert(testPlans).values({ ...plan, ownerId: userIds.lead }).$returningId())[0].id);

		const sessionIds: number[] = [];
		for (const spec of SESSIONS) {
			const startedAt = new Date(now.getTime() - spec.daysAgo * DAY_MS - 3 * 3600 * 1000);
			const rig = RIGS[spec.rig];
			const projectile = PROJECTILES[spec.projectile];
			const { rows, elevationDeg } = sessionShots(spec, rig, projectile, random, startedAt);
			const lastShot = rows.at(-1)?.firedAt ?? startedAt;
			const [session] = await tx
				.insert(rangeSessions)
				.values({
					title: spec.title,
					rigId: rigIds[spec.rig],
					projectileId: projectileIds[spec.projectile],
					testPlanId: spec.plan === null ? null : planIds[spec.plan],
					status: spec.open ? 'open' : 'closed',
					startedAt,
					closedAt: spec.open ? null : new Date(lastShot.getTime() + 600_000),
					closedBy: spec.open ? null : userIds.range_officer,
					targetDistanceM: spec.distanceM,
					elevationDeg,
					azimuthDeg: 0,
					launchHeightM: LAUNCH_HEIGHT_M,
					aimHeightM: AIM_HEIGHT_M,
					downrangeChronoM: spec.downrangeChronoM,
					...spec.conditions,
					createdBy: userIds.range_officer
				})
				.$returningId();
			await tx.insert(shots).values(rows.map((r) => ({ ...r, sessionId: session.id, enteredBy: userIds.range_officer })));
			sessionIds.push(session.id);
		}
		return { userIds, rigIds, projectileIds, sessionIds };
	});

	// Every shot compared with the model, as the app does when shots arrive.
	await recomputePredictions(db, { sessionIds: ids.sessionIds });
	// The lab's history: H1 with 25 mm ice was calibrated on its pressure sweep and approved by the
	// lead; the analyst has a draft for H2 with the nylon proxy waiting for review.
	const analyst = { id: ids.userIds.analyst, role: 'analyst' as const };
	const lead = { id: ids.userIds.lead, role: 'lead' as const };
	const h1 = await fitCalibration(db, {
		rigId: ids.rigIds[0],
		projectileId: ids.projectileIds[0],
		sessionIds: [ids.sessionIds[0]],
		parameters: ['efficiency', 'pressureSlope', 'dragCoefficient', 'elevationBias'],
		exclusions: [],
		userId: analyst.id,
		notes: 'Pressure sweep 0.9–3.2 bar with both chronographs.'
	});
	await approveCalibration(db, h1.calibration.id, lead);
	await fitCalibration(db, {
		rigId: ids.rigIds[1],
		projectileId: ids.projectileIds[2],
		sessionIds: [ids.sessionIds[2]],
		parameters: ['efficiency', 'pressureSlope', 'dragCoefficient'],
		exclusions: [],
		userId: analyst.id,
		notes: 'Nylon proxy sweep; for review.'
	});
	return true;
}
