// The invented demo lab, "Northfold Impact Range": people, rigs, projectiles, test plans,
// range sessions and their shots, and the lab's calibrations. The shots come from a simulation
// richer than the app's default model (issue 13): the valve-flow family of the launcher model
// (effective valve area, opening time and friction per rig, the session's air temperature), the
// sphere drag correlation for spheres (a roughness factor on it) and a constant C_D for the
// cylinder, with a gauge whose reading differs from the real fill, chronograph noise, launch-angle
// scatter, impact scatter and the occasional miss. One rig slowly wears (H2: its valve's effective
// area shrinks week by week), so rig health shows drift.
//
// The lab's history runs in date order: H1 with 25 mm ice is swept, the analyst fits it (model
// chosen by held-out error) and the lead approves it, and only then are the qualification runs
// fired, at the fill pressure and elevation the approved calibration gives; the crew fires until
// the plan's shots are in (a miss or a shot outside the tolerance is re-shot). Rigs without a
// calibration for the projectile were dialled in on the range with sighting shots.
//
// Same seed → same data. Idempotent: does nothing when the lab is already there.
import { and, count, eq } from 'drizzle-orm';
import { hashPassword } from '../accounts/passwords';
import { airDensity, createRandom, solveCalibratedElevation, solveFillPressure, type Random } from '../../physics';
import {
	calibratedMuzzleSpeed,
	flyUnder,
	neutralParameters,
	type DragLaw,
	type LauncherCalibration,
	type LauncherModel,
	type RangeConditions,
	type ShotSetup
} from '../../physics/launcher';
import { DEMO_PASSWORD, DEMO_USERS } from '../../../../scripts/lib/demo-users.mjs';
import type { Database } from './client';
import { auditEvents, calibrations, projectiles, rangeSessions, rigs, shots, testPlans, users } from './schema';
import { approveCalibration, calibrationInForce, fitCalibration, recomputePredictions } from '../reconcile';

const SEED = 20261202;
const DAY_MS = 24 * 3600 * 1000;
const BAR = 1e5;

/** The "true" rig the shots come from (valve-flow family), unknown to the app until it calibrates. */
interface RigTruth {
	/** Effective valve area C·A_v when fully open, m². */
	valveAreaM2: number;
	/** Opening time of the valve, s. */
	openingTimeS: number;
	/** Friction of the projectile in the bore, N. */
	frictionN: number;
	/** Relative change of the valve area per week of the campaign (seal wear: negative). */
	valveAreaWearPerWeek: number;
	/** Mount offset of the launch angle from the set elevation, degrees. */
	elevationBiasDeg: number;
	/** Shot-to-shot scatter of the launch angle, degrees. */
	elevationSdDeg: number;
	/**
	 * Shot-to-shot variation of the muzzle speed itself, relative: the projectiles' mass and fit in
	 * the bore (moulded ice varies by a few per cent in mass).
	 */
	speedSdRel: number;
	/** Impact read off the target face, and the rig's lateral scatter, m. */
	impactSdM: number;
}

type RigSpec = typeof rigs.$inferInsert & { truth: RigTruth };

// Valve values: effective areas of a few tens of mm² (an orifice of 6–16 mm with its discharge
// coefficient) and opening times of 20–40 ms, as a pilot-operated or actuated valve has; they put
// the plans' speeds at 1.5–2 bar, well inside every rig's rating.
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
		truth: { valveAreaM2: 0.3e-4, openingTimeS: 0.02, frictionN: 1.5, valveAreaWearPerWeek: 0, elevationBiasDeg: 0.05, elevationSdDeg: 0.03, speedSdRel: 0.008, impactSdM: 0.003 }
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
		truth: { valveAreaM2: 1.2e-4, openingTimeS: 0.02, frictionN: 4, valveAreaWearPerWeek: -0.0035, elevationBiasDeg: -0.1, elevationSdDeg: 0.04, speedSdRel: 0.007, impactSdM: 0.005 }
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
		truth: { valveAreaM2: 2.0e-4, openingTimeS: 0.04, frictionN: 20, valveAreaWearPerWeek: 0, elevationBiasDeg: 0.03, elevationSdDeg: 0.05, speedSdRel: 0.005, impactSdM: 0.01 }
	}
];

/** How a projectile really flies: the sphere correlation times a factor, or a constant C_D. */
type ProjectileSpec = typeof projectiles.$inferInsert & { trueDrag: { law: DragLaw; coefficient: number } };

const PROJECTILES: ProjectileSpec[] = [
	// Ice-ball masses follow ρ_ice ≈ 0.92 g/cm³ (reference sheet §8); smooth-sphere C_D ≈ 0.47
	// (Hoerner, Fluid-Dynamic Drag, 1965, from memory) as the nominal value. Moulded ice is a
	// little rough: its true drag is the sphere correlation times 1.08 (the nylon ball: 1.0).
	{ name: 'Ice ball 25 mm', massKg: 7.53e-3, diameterM: 0.025, lengthM: 0.025, shape: 'sphere', nominalDragCoefficient: 0.47, trueDrag: { law: 'sphere', coefficient: 1.08 }, notes: 'Moulded, stored at −4 °C.' },
	{ name: 'Ice ball 45 mm', massKg: 43.9e-3, diameterM: 0.045, lengthM: 0.045, shape: 'sphere', nominalDragCoefficient: 0.47, trueDrag: { law: 'sphere', coefficient: 1.06 }, notes: 'Moulded, stored at −4 °C.' },
	{ name: 'Nylon sphere 45 mm', massKg: 54.4e-3, diameterM: 0.045, lengthM: 0.045, shape: 'sphere', nominalDragCoefficient: 0.47, trueDrag: { law: 'sphere', coefficient: 1.0 }, notes: 'Reusable proxy for rig checks.' },
	// Flat-faced cylinder, l/d = 1: C_D 0.91 (reference sheet §4, Matthews Fig. 5.13(b)).
	{ name: 'Foam-core impactor 60 mm', massKg: 0.18, diameterM: 0.06, lengthM: 0.06, shape: 'cylinder', nominalDragCoefficient: 0.91, trueDrag: { law: 'constant', coefficient: 0.95 }, notes: 'Aluminium face plate on a foam core.' }
];

const PLANS = [
	{ name: 'Hail 25 mm at 23.0 m/s', speedAt: 'target' as const, requiredSpeedMps: 23.0, speedTolerancePct: 5, impactToleranceM: 0.015, targetDistanceM: 5, shotsRequired: 11, notes: 'Ice ball 25 mm, speed judged at the specimen; 11 impact locations.' },
	{ name: 'Hail 45 mm at 30.7 m/s', speedAt: 'target' as const, requiredSpeedMps: 30.7, speedTolerancePct: 5, impactToleranceM: 0.02, targetDistanceM: 6, shotsRequired: 11, notes: 'Ice ball 45 mm, speed judged at the specimen.' }
];

type Conditions = { temperatureC: number; pressurePa: number; relativeHumidity: number; windXMps: number; windZMps: number };

type SessionSpec = {
	title: string;
	rig: number;
	projectile: number;
	plan: number | null;
	daysAgo: number;
	/**
	 * A fill-pressure sweep for calibration (gauge readings from..to in `levels` steps, cycled over
	 * `shots`); or a required speed at the target, fired until `plan.shotsRequired` shots meet the
	 * plan (at most `maxShots`), or `shots` shots when there is no plan.
	 */
	aim: { sweepBar: [number, number]; levels: number; shots: number } | { targetSpeedMps: number; shots?: number; maxShots?: number };
	distanceM: number;
	downrangeChronoM: number | null;
	conditions: Conditions;
	open?: boolean;
};

/** In the order they are listed on the overview (the seed fires them in date order). */
const SESSIONS: SessionSpec[] = [
	{ title: 'H1 pressure sweep, ice 25 mm', rig: 0, projectile: 0, plan: null, daysAgo: 38, aim: { sweepBar: [1.0, 2.4], levels: 8, shots: 40 }, distanceM: 5, downrangeChronoM: 4.5, conditions: { temperatureC: 6, pressurePa: 101_900, relativeHumidity: 0.7, windXMps: 0, windZMps: 0 } },
	{ title: 'H1 qualification run A', rig: 0, projectile: 0, plan: 0, daysAgo: 24, aim: { targetSpeedMps: 23, maxShots: 14 }, distanceM: 5, downrangeChronoM: 4.5, conditions: { temperatureC: 4, pressurePa: 100_800, relativeHumidity: 0.8, windXMps: -0.5, windZMps: 0.3 } },
	{ title: 'H2 pressure sweep, nylon proxy', rig: 1, projectile: 2, plan: null, daysAgo: 35, aim: { sweepBar: [1.0, 3.1], levels: 8, shots: 40 }, distanceM: 6, downrangeChronoM: 5.5, conditions: { temperatureC: 8, pressurePa: 101_300, relativeHumidity: 0.6, windXMps: 0, windZMps: 0 } },
	{ title: 'H2 hail 45 mm, panel batch 7', rig: 1, projectile: 1, plan: 1, daysAgo: 17, aim: { targetSpeedMps: 30.7, maxShots: 14 }, distanceM: 6, downrangeChronoM: 5.5, conditions: { temperatureC: 3, pressurePa: 99_900, relativeHumidity: 0.85, windXMps: 0.4, windZMps: -0.6 } },
	{ title: 'H2 hail 45 mm, panel batch 8', rig: 1, projectile: 1, plan: 1, daysAgo: 3, aim: { targetSpeedMps: 30.7, maxShots: 14 }, distanceM: 6, downrangeChronoM: 5.5, conditions: { temperatureC: 1, pressurePa: 102_200, relativeHumidity: 0.75, windXMps: 0, windZMps: 0.8 } },
	{ title: 'P3 impactor sweep', rig: 2, projectile: 3, plan: null, daysAgo: 29, aim: { sweepBar: [1.2, 3.6], levels: 8, shots: 40 }, distanceM: 12, downrangeChronoM: 10, conditions: { temperatureC: 11, pressurePa: 101_000, relativeHumidity: 0.55, windXMps: 0, windZMps: 0 } },
	{ title: 'P3 packaging drops, lot 42', rig: 2, projectile: 3, plan: null, daysAgo: 9, aim: { targetSpeedMps: 28, shots: 24 }, distanceM: 12, downrangeChronoM: null, conditions: { temperatureC: 9, pressurePa: 100_400, relativeHumidity: 0.65, windXMps: 1.2, windZMps: -0.4 } },
	{ title: 'H1 qualification run B', rig: 0, projectile: 0, plan: 0, daysAgo: 1, aim: { targetSpeedMps: 23, maxShots: 14 }, distanceM: 5, downrangeChronoM: 4.5, conditions: { temperatureC: 2, pressurePa: 101_500, relativeHumidity: 0.9, windXMps: 0, windZMps: 0.2 }, open: true }
];

/**
 * The lab's calibrations, fitted (and approved) on the given days: after the sweep they use,
 * before the sessions they judge. `approveDaysAgo` absent: left a draft for review.
 */
const CALIBRATIONS = [
	{ rig: 0, projectile: 0, session: 0, fitDaysAgo: 36, approveDaysAgo: 34, notes: 'Pressure sweep 1.0–2.4 bar with both chronographs; model chosen by held-out error.' },
	{ rig: 1, projectile: 2, session: 2, fitDaysAgo: 33, approveDaysAgo: null, notes: 'Nylon proxy sweep; for review.' }
];

const LAUNCH_HEIGHT_M = 1.2;
const AIM_HEIGHT_M = 1.2;
/** How many weeks before "now" the campaign starts: wear is counted from there. */
const CAMPAIGN_WEEKS = 6;
/** Gauge: the real fill differs from what was read (and logged) by this SD, Pa (a 0.01 bar digital gauge). */
const GAUGE_SD_PA = 800;
/** The crew sets the fill to the gauge's resolution, Pa. */
const GAUGE_STEP_PA = 1000;
const CHRONO_SD_MPS = 0.08;
const MISS_RATE = 0.02;
const VALVE_FLOW: LauncherModel = { family: 'valve-flow', drag: 'sphere' };

function round(value: number, digits: number) {
	const f = 10 ** digits;
	return Math.round(value * f) / f;
}

function geometryOf(rig: RigSpec) {
	return { reservoirM3: rig.reservoirM3, deadM3: rig.deadM3, boreDiameterM: rig.boreDiameterM, travelM: rig.travelM };
}

function rangeConditions(spec: SessionSpec, elevationDeg: number): RangeConditions {
	const c = spec.conditions;
	return {
		targetDistanceM: spec.distanceM,
		elevationDeg,
		azimuthDeg: 0,
		launchHeightM: LAUNCH_HEIGHT_M,
		aimHeightM: AIM_HEIGHT_M,
		airDensityKgM3: airDensity({ temperatureC: c.temperatureC, pressurePa: c.pressurePa, relativeHumidity: c.relativeHumidity }),
		ambientPa: c.pressurePa,
		temperatureC: c.temperatureC,
		wind: { xMps: c.windXMps, zMps: c.windZMps }
	};
}

/** The true rig and projectile on a day of the campaign, as a calibration the physics can run. */
function truthCalibration(rig: RigSpec, projectile: ProjectileSpec, weeksIn: number): LauncherCalibration {
	const t = rig.truth;
	return {
		model: { ...VALVE_FLOW, drag: projectile.trueDrag.law },
		parameters: {
			...neutralParameters(2 * BAR),
			valveAreaM2: t.valveAreaM2 * (1 + t.valveAreaWearPerWeek * weeksIn),
			openingTimeS: t.openingTimeS,
			frictionN: t.frictionN,
			dragCoefficient: projectile.trueDrag.coefficient,
			elevationBiasDeg: t.elevationBiasDeg
		},
		fitted: [],
		identifiable: [],
		covariance: [],
		fillPressureRangePa: { min: 0, max: Infinity }
	};
}

/**
 * The crew's set point for a required speed at the target under a calibration (the approved one,
 * or the rig as dialled in on the range): fill pressure and elevation solved together (the
 * elevation changes the flight a little, the speed changes the elevation), to the gauge's and the
 * mount's resolution.
 */
function setPoint(calibration: LauncherCalibration, spec: SessionSpec, rig: RigSpec, projectile: ProjectileSpec, requiredSpeedMps: number) {
	let elevationDeg = 0;
	let fillGaugePa = 0;
	for (let pass = 0; pass < 3; pass++) {
		const shot = { rig: geometryOf(rig), projectile: { massKg: projectile.massKg, diameterM: projectile.diameterM }, session: rangeConditions(spec, elevationDeg) };
		const fill = solveFillPressure({ calibration, shot, at: 'target', requiredSpeedMps, ratedPressurePa: rig.ratedPressurePa });
		if (!fill.ok) throw new Error(`demo seed: no set point for "${spec.title}": ${fill.reason}`);
		fillGaugePa = fill.fillGaugePa;
		const elevation = solveCalibratedElevation(calibration, shot, fill.muzzleSpeedMps);
		if (!elevation.ok) throw new Error(`demo seed: no elevation for "${spec.title}": ${elevation.reason}`);
		elevationDeg = elevation.elevationDeg;
	}
	return {
		fillGaugePa: Math.round(fillGaugePa / GAUGE_STEP_PA) * GAUGE_STEP_PA,
		elevationDeg: round(elevationDeg, 2)
	};
}

type ShotRow = typeof shots.$inferInsert;

/** One shot of the true rig: what the instruments show. */
function fireShot(
	truth: LauncherCalibration,
	rig: RigSpec,
	projectile: ProjectileSpec,
	spec: SessionSpec,
	setElevationDeg: number,
	gaugePa: number,
	random: Random
): Omit<ShotRow, 'sessionId' | 'sequence' | 'clientUuid' | 'firedAt'> {
	const session = rangeConditions(spec, setElevationDeg);
	const actualPa = Math.max(0, gaugePa + random.normal(0, GAUGE_SD_PA));
	const setup: ShotSetup = { rig: geometryOf(rig), projectile: { massKg: projectile.massKg, diameterM: projectile.diameterM }, session, fillGaugePa: actualPa };
	const muzzle = calibratedMuzzleSpeed(truth.model!, truth.parameters, setup, actualPa);
	const missRoll = random.next();
	const noise = Array.from({ length: 6 }, () => random.normal(0, 1));
	if (!muzzle.ok)
		return { fillGaugePa: gaugePa, muzzleSpeedMps: null, downrangeSpeedMps: null, impactXM: null, impactYM: null, miss: true, note: 'Did not leave the barrel' };
	const v0 = muzzle.speedMps * (1 + rig.truth.speedSdRel * noise[0]);
	const launchDeg = setElevationDeg + rig.truth.elevationBiasDeg + rig.truth.elevationSdDeg * noise[1];
	const law = projectile.trueDrag.law;
	const cd = projectile.trueDrag.coefficient;
	const atTarget = flyUnder(law, setup, v0, cd, launchDeg, spec.distanceM);
	const atChrono = spec.downrangeChronoM ? flyUnder(law, setup, v0, cd, launchDeg, spec.downrangeChronoM) : null;
	const miss = missRoll < MISS_RATE || !atTarget.reached;
	return {
		fillGaugePa: gaugePa,
		muzzleSpeedMps: round(v0 + CHRONO_SD_MPS * noise[2], 2),
		downrangeSpeedMps: atChrono?.reached ? round(atChrono.speedMps + CHRONO_SD_MPS * noise[3], 2) : null,
		impactXM: miss ? null : round(atTarget.lateralM + rig.truth.impactSdM * noise[4], 4),
		impactYM: miss ? null : round(atTarget.heightM - AIM_HEIGHT_M + rig.truth.impactSdM * noise[5], 4),
		miss,
		note: miss ? 'Missed the target face' : null
	};
}

/** Did the shot meet the plan, as the crew sees it on the range (downrange reading, impact radius)? */
function meetsPlan(plan: (typeof PLANS)[number], shot: ReturnType<typeof fireShot>) {
	if (shot.miss || shot.impactXM == null || shot.impactYM == null) return false;
	const speed = shot.downrangeSpeedMps ?? shot.muzzleSpeedMps;
	if (speed == null) return false;
	return (
		Math.abs(speed - plan.requiredSpeedMps) <= (plan.requiredSpeedMps * plan.speedTolerancePct) / 100 &&
		Math.hypot(shot.impactXM, shot.impactYM) <= plan.impactToleranceM
	);
}

function sessionShots(
	spec: SessionSpec,
	rig: RigSpec,
	projectile: ProjectileSpec,
	crewCalibration: LauncherCalibration,
	random: Random,
	startedAt: Date
) {
	const weeksIn = CAMPAIGN_WEEKS - spec.daysAgo / 7;
	const truth = truthCalibration(rig, projectile, weeksIn);
	const plan = spec.plan === null ? null : PLANS[spec.plan];
	let elevationDeg: number;
	let gaugeAt: (i: number) => number;
	if ('sweepBar' in spec.aim) {
		const { sweepBar, levels } = spec.aim;
		const step = (sweepBar[1] - sweepBar[0]) / (levels - 1);
		gaugeAt = (i) => Math.round(((sweepBar[0] + step * (i % levels)) * BAR) / GAUGE_STEP_PA) * GAUGE_STEP_PA;
		// Sighted in at mid-sweep with the rig as it is that day.
		elevationDeg = sightedElevation(truth, spec, rig, projectile);
	} else {
		const set = setPoint(crewCalibration, spec, rig, projectile, spec.aim.targetSpeedMps);
		elevationDeg = set.elevationDeg;
		gaugeAt = () => set.fillGaugePa;
	}
	const limit = 'sweepBar' in spec.aim ? spec.aim.shots : plan ? (spec.aim.maxShots ?? 14) : (spec.aim.shots ?? 20);
	const rows: ShotRow[] = [];
	let good = 0;
	let firedAtMs = startedAt.getTime();
	// Sequence numbers 1..n with no gap: every shot fired is logged, a dud included.
	for (let i = 0; i < limit; i++) {
		if (plan && good >= plan.shotsRequired) break;
		firedAtMs += (90 + random.integer(60)) * 1000;
		const shot = fireShot(truth, rig, projectile, spec, elevationDeg, gaugeAt(i), random);
		if (plan && meetsPlan(plan, shot)) good++;
		rows.push({ ...shot, sessionId: 0, sequence: rows.length + 1, clientUuid: seededUuid(random), firedAt: new Date(firedAtMs) });
	}
	return { rows, elevationDeg };
}

/** The elevation a crew sights a sweep in at: on the aim point at mid-sweep, with the rig as it is. */
function sightedElevation(truth: LauncherCalibration, spec: SessionSpec, rig: RigSpec, projectile: ProjectileSpec) {
	if (!('sweepBar' in spec.aim)) throw new Error('not a sweep');
	const p = ((spec.aim.sweepBar[0] + spec.aim.sweepBar[1]) / 2) * BAR;
	const shot = { rig: geometryOf(rig), projectile: { massKg: projectile.massKg, diameterM: projectile.diameterM }, session: rangeConditions(spec, 0) };
	const m = calibratedMuzzleSpeed(truth.model!, truth.parameters, { ...shot, fillGaugePa: p }, p);
	if (!m.ok) throw new Error(`demo seed: mid-sweep shot of "${spec.title}" fails: ${m.reason}`);
	const elevation = solveCalibratedElevation(truth, shot, m.speedMps);
	if (!elevation.ok) throw new Error(`demo seed: no elevation for "${spec.title}": ${elevation.reason}`);
	return round(elevation.elevationDeg, 2);
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
	const passwordHash = await hashPassword(DEMO_PASSWORD);
	const daysAgo = (days: number, hours = 0) => new Date(now.getTime() - days * DAY_MS + hours * 3600 * 1000);

	const ids = await db.transaction(async (tx) => {
		const userIds: Record<string, number> = {};
		for (const u of DEMO_USERS) {
			const [row] = await tx.insert(users).values({ ...u, role: u.role as never, passwordHash }).$returningId();
			userIds[u.role] = row.id;
		}
		const rigIds: number[] = [];
		for (const { truth: _truth, ...rig } of RIGS) rigIds.push((await tx.insert(rigs).values(rig).$returningId())[0].id);
		const projectileIds: number[] = [];
		for (const { trueDrag: _drag, ...p } of PROJECTILES) projectileIds.push((await tx.insert(projectiles).values(p).$returningId())[0].id);
		const planIds: number[] = [];
		for (const plan of PLANS) planIds.push((await tx.insert(testPlans).values({ ...plan, ownerId: userIds.lead }).$returningId())[0].id);
		return { userIds, rigIds, projectileIds, planIds };
	});
	const analyst = { id: ids.userIds.analyst, role: 'analyst' as const };
	const lead = { id: ids.userIds.lead, role: 'lead' as const };

	// The lab's history in date order: sessions fired, calibrations fitted and approved.
	type Event = { daysAgo: number; order: number; run: () => Promise<void> };
	const sessionIds: number[] = new Array(SESSIONS.length);
	const events: Event[] = [];
	SESSIONS.forEach((spec, index) =>
		events.push({
			daysAgo: spec.daysAgo,
			order: index,
			run: async () => {
				const startedAt = daysAgo(spec.daysAgo, -3);
				const rig = RIGS[spec.rig];
				const projectile = PROJECTILES[spec.projectile];
				// The set point comes from the calibration in force that day, when the pair has an
				// approved one; otherwise the crew dialled the rig in with sighting shots at the start of
				// the campaign (the true rig before any wear).
				const inForce = await calibrationInForce(db, ids.rigIds[spec.rig], ids.projectileIds[spec.projectile]);
				const crew = inForce.uncalibrated ? truthCalibration(rig, projectile, 0) : inForce.model;
				const { rows, elevationDeg } = sessionShots(spec, rig, projectile, crew, random, startedAt);
				const lastShot = rows.at(-1)?.firedAt ?? startedAt;
				sessionIds[index] = await db.transaction(async (tx) => {
					const [session] = await tx
						.insert(rangeSessions)
						.values({
							title: spec.title,
							rigId: ids.rigIds[spec.rig],
							projectileId: ids.projectileIds[spec.projectile],
							testPlanId: spec.plan === null ? null : ids.planIds[spec.plan],
							status: spec.open ? 'open' : 'closed',
							startedAt,
							closedAt: spec.open ? null : new Date(lastShot.getTime() + 600_000),
							closedBy: spec.open ? null : ids.userIds.range_officer,
							targetDistanceM: spec.distanceM,
							elevationDeg,
							azimuthDeg: 0,
							launchHeightM: LAUNCH_HEIGHT_M,
							aimHeightM: AIM_HEIGHT_M,
							downrangeChronoM: spec.downrangeChronoM,
							...spec.conditions,
							createdBy: ids.userIds.range_officer
						})
						.$returningId();
					await tx.insert(shots).values(rows.map((r) => ({ ...r, sessionId: session.id, enteredBy: ids.userIds.range_officer })));
					return session.id;
				});
				// Every shot compared with the model, as the app does when shots arrive.
				await recomputePredictions(db, { sessionIds: [sessionIds[index]] });
			}
		})
	);
	CALIBRATIONS.forEach((c, index) =>
		events.push({
			daysAgo: c.fitDaysAgo,
			order: SESSIONS.length + index,
			run: async () => {
				const fitted = await fitCalibration(db, {
					rigId: ids.rigIds[c.rig],
					projectileId: ids.projectileIds[c.projectile],
					sessionIds: [sessionIds[c.session]],
					model: 'auto',
					exclusions: [],
					userId: analyst.id,
					notes: c.notes
				});
				const id = fitted.calibration.id;
				const createdAt = daysAgo(c.fitDaysAgo, 2);
				const approvedAt = c.approveDaysAgo === null ? null : daysAgo(c.approveDaysAgo, 1);
				if (approvedAt) await approveCalibration(db, id, lead);
				// fitCalibration and approveCalibration stamp the wall clock: date them in the lab's history.
				await db.update(calibrations).set(approvedAt ? { createdAt, approvedAt } : { createdAt }).where(eq(calibrations.id, id));
				const events = and(eq(auditEvents.entityType, 'calibration'), eq(auditEvents.entityId, String(id)));
				await db.update(auditEvents).set({ at: createdAt }).where(and(events, eq(auditEvents.action, 'fit')));
				if (approvedAt) await db.update(auditEvents).set({ at: approvedAt }).where(and(events, eq(auditEvents.action, 'approve')));
			}
		})
	);
	events.sort((a, b) => b.daysAgo - a.daysAgo || a.order - b.order);
	for (const e of events) await e.run();
	return true;
}
