// Shotwright's data model (MariaDB through Drizzle, MySQL dialect).
// Habits: SI units in DOUBLE columns (names end in the unit: Pa, M, M3, Kg, Mps, Deg, C),
// timestamps in UTC (the connection's time zone is forced to +00:00), snake_case SQL via `casing`.
import { sql } from 'drizzle-orm';
import {
	bigint,
	boolean,
	char,
	customType,
	datetime,
	double,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	text,
	uniqueIndex,
	varchar
} from 'drizzle-orm/mysql-core';

import { ROLE_ORDER as ROLES } from '../../roles';
import { PROJECTILE_SHAPES, SPEED_REFERENCES } from '../../schemas/range';

export { ROLES };
export const SESSION_STATUSES = ['open', 'closed'] as const;
export const CALIBRATION_STATUSES = ['draft', 'approved', 'superseded'] as const;
/** pending: to send (again, after nextAttemptAt); sent; failed: gave up after the last retry. */
export const MAIL_STATUSES = ['pending', 'sent', 'failed'] as const;

/** Raw file bytes of an import (up to 4 GiB in MariaDB's LONGBLOB). */
const longBlob = customType<{ data: Buffer; driverData: Buffer }>({
	dataType: () => 'longblob'
});

/**
 * JSON column. MariaDB stores JSON as LONGTEXT with a validity check and mysql2 hands it back
 * as a string (MySQL's native JSON type comes back parsed), so parse here, once, for every table.
 */
const json = <T = unknown>() =>
	customType<{ data: T; driverData: string }>({
		dataType: () => 'json',
		toDriver: (value) => JSON.stringify(value),
		fromDriver: (value) => (typeof value === 'string' ? JSON.parse(value) : value) as T
	})();

const created = () =>
	datetime({ mode: 'date', fsp: 3 })
		.notNull()
		.default(sql`CURRENT_TIMESTAMP(3)`);
const updated = () =>
	datetime({ mode: 'date', fsp: 3 })
		.notNull()
		.default(sql`CURRENT_TIMESTAMP(3)`)
		.$onUpdate(() => new Date());
const optionalTime = () => datetime({ mode: 'date', fsp: 3 });

export const users = mysqlTable(
	'users',
	{
		id: int().autoincrement().primaryKey(),
		email: varchar({ length: 254 }).notNull(),
		name: varchar({ length: 120 }).notNull(),
		role: mysqlEnum(ROLES).notNull().default('viewer'),
		/** bcrypt hash; null until an invited user sets a password. */
		passwordHash: varchar({ length: 100 }),
		/** Display units, e.g. {"pressure":"bar","speed":"m/s",...}; null means the lab default. */
		unitPreferences: json<Record<string, string>>(),
		disabledAt: optionalTime(),
		/**
		 * Copied into each session's JWT at sign-in. Raising it (sign-out, password change or reset,
		 * role change, disabling) ends every session signed in before: guards.ts compares the two.
		 */
		sessionVersion: int().notNull().default(0),
		createdAt: created(),
		updatedAt: updated()
	},
	(t) => [uniqueIndex('users_email_unique').on(t.email)]
);

export const rigs = mysqlTable(
	'rigs',
	{
		id: int().autoincrement().primaryKey(),
		name: varchar({ length: 120 }).notNull(),
		reservoirM3: double().notNull(),
		deadM3: double().notNull(),
		boreDiameterM: double().notNull(),
		travelM: double().notNull(),
		ratedPressurePa: double().notNull(),
		valveType: varchar({ length: 80 }).notNull(),
		/** Efficiency used before any calibration is approved (clearly marked "uncalibrated"). */
		nominalEfficiency: double().notNull().default(0.6),
		notes: text(),
		deletedAt: optionalTime(),
		createdAt: created(),
		updatedAt: updated()
	},
	(t) => [uniqueIndex('rigs_name_unique').on(t.name)]
);

export const projectiles = mysqlTable(
	'projectiles',
	{
		id: int().autoincrement().primaryKey(),
		name: varchar({ length: 120 }).notNull(),
		massKg: double().notNull(),
		diameterM: double().notNull(),
		lengthM: double().notNull(),
		shape: mysqlEnum(PROJECTILE_SHAPES).notNull(),
		nominalDragCoefficient: double().notNull(),
		notes: text(),
		deletedAt: optionalTime(),
		createdAt: created(),
		updatedAt: updated()
	},
	(t) => [uniqueIndex('projectiles_name_unique').on(t.name)]
);

export const testPlans = mysqlTable(
	'test_plans',
	{
		id: int().autoincrement().primaryKey(),
		name: varchar({ length: 160 }).notNull(),
		speedAt: mysqlEnum(SPEED_REFERENCES).notNull(),
		requiredSpeedMps: double().notNull(),
		speedTolerancePct: double().notNull(),
		impactToleranceM: double().notNull(),
		targetDistanceM: double().notNull(),
		shotsRequired: int().notNull(),
		/** The firing line is told to stop after this many out-of-tolerance shots in a row. */
		stopAfterOutOfTolerance: int().notNull().default(3),
		notes: text(),
		ownerId: int().references(() => users.id),
		deletedAt: optionalTime(),
		createdAt: created(),
		updatedAt: updated()
	},
	(t) => [uniqueIndex('test_plans_name_unique').on(t.name)]
);

export const rangeSessions = mysqlTable(
	'range_sessions',
	{
		id: int().autoincrement().primaryKey(),
		title: varchar({ length: 160 }).notNull(),
		rigId: int()
			.notNull()
			.references(() => rigs.id),
		projectileId: int()
			.notNull()
			.references(() => projectiles.id),
		testPlanId: int().references(() => testPlans.id),
		status: mysqlEnum(SESSION_STATUSES).notNull().default('open'),
		startedAt: datetime({ mode: 'date', fsp: 3 }).notNull(),
		closedAt: optionalTime(),
		closedBy: int().references(() => users.id),
		// Geometry (fixed for the session).
		targetDistanceM: double().notNull(),
		elevationDeg: double().notNull(),
		azimuthDeg: double().notNull().default(0),
		launchHeightM: double().notNull(),
		aimHeightM: double().notNull(),
		/** Distance of the second (downrange) chronograph from the muzzle; null when there is none. */
		downrangeChronoM: double(),
		// Conditions.
		temperatureC: double().notNull(),
		pressurePa: double().notNull(),
		relativeHumidity: double().notNull(),
		windXMps: double().notNull().default(0),
		windZMps: double().notNull().default(0),
		notes: text(),
		createdBy: int().references(() => users.id),
		deletedAt: optionalTime(),
		createdAt: created(),
		updatedAt: updated()
	},
	(t) => [
		index('range_sessions_rig_started_idx').on(t.rigId, t.startedAt),
		index('range_sessions_status_idx').on(t.status, t.startedAt)
	]
);

export const imports = mysqlTable(
	'imports',
	{
		id: int().autoincrement().primaryKey(),
		sessionId: int().references(() => rangeSessions.id),
		fileName: varchar({ length: 255 }).notNull(),
		sizeBytes: int().notNull(),
		sha256: char({ length: 64 }).notNull(),
		rawBytes: longBlob().notNull(),
		/** Column → field mapping and the unit per column that were used. */
		mapping: json<Record<string, unknown>>().notNull(),
		rowCount: int().notNull(),
		importedCount: int().notNull(),
		rejectedCount: int().notNull(),
		/** Rejected rows with row, column and reason. */
		errors: json<unknown[]>().notNull(),
		createdBy: int()
			.notNull()
			.references(() => users.id),
		createdAt: created()
	},
	(t) => [index('imports_sha256_idx').on(t.sha256), index('imports_session_idx').on(t.sessionId)]
);

export const shots = mysqlTable(
	'shots',
	{
		id: bigint({ mode: 'number' }).autoincrement().primaryKey(),
		sessionId: int()
			.notNull()
			.references(() => rangeSessions.id),
		sequence: int().notNull(),
		/** Made by the client that logged the shot: a resend of the same shot never duplicates it. */
		clientUuid: char({ length: 36 }).notNull(),
		firedAt: datetime({ mode: 'date', fsp: 3 }).notNull(),
		fillGaugePa: double().notNull(),
		muzzleSpeedMps: double(),
		downrangeSpeedMps: double(),
		/** Impact offset on the target face from the aim point: x to the right, y up (m). */
		impactXM: double('impact_x_m'),
		impactYM: double('impact_y_m'),
		miss: boolean().notNull().default(false),
		note: text(),
		/** Per-shot conditions when the chronograph file carries them; else the session's. */
		temperatureC: double(),
		pressurePa: double(),
		enteredBy: int().references(() => users.id),
		importId: int().references(() => imports.id),
		/**
		 * Fired above the rig's rated working pressure, and confirmed so by the officer (a safety
		 * event: audited and mailed to the leads). Unconfirmed, such a fill pressure is refused as a typo.
		 */
		aboveRating: boolean().notNull().default(false),
		/** Voided at the firing line (e.g. a bad chronograph reading): kept with its reason, out of the statistics. */
		voidedAt: optionalTime(),
		voidReason: varchar({ length: 500 }),
		voidedBy: int().references(() => users.id),
		deletedAt: optionalTime(),
		createdAt: created(),
		updatedAt: updated()
	},
	(t) => [
		uniqueIndex('shots_session_sequence_unique').on(t.sessionId, t.sequence),
		uniqueIndex('shots_client_uuid_unique').on(t.clientUuid),
		index('shots_fired_idx').on(t.firedAt)
	]
);

/**
 * A calibration's values (SI). `model` names the family and drag law (absent on calibrations
 * made before the valve-flow family: gas work, constant C_D). `lossN` is the older loss force
 * (N), read as the energy term E = lossN · travel.
 */
export type CalibrationParameters = {
	model?: { family: 'gas-work' | 'valve-flow'; drag: 'constant' | 'sphere' };
	eta0?: number;
	eta1?: number;
	pRefPa?: number;
	energyOffsetJ?: number;
	lossN?: number;
	valveAreaM2?: number;
	openingTimeS?: number;
	frictionN?: number;
	dragCoefficient?: number;
	elevationBiasDeg?: number;
};

export const calibrations = mysqlTable(
	'calibrations',
	{
		id: int().autoincrement().primaryKey(),
		rigId: int()
			.notNull()
			.references(() => rigs.id),
		projectileId: int()
			.notNull()
			.references(() => projectiles.id),
		status: mysqlEnum(CALIBRATION_STATUSES).notNull().default('draft'),
		/** Names of the fitted parameters, e.g. ["eta0","dragCoefficient"]. */
		fitted: json<string[]>().notNull(),
		parameters: json<CalibrationParameters>().notNull(),
		standardErrors: json<Record<string, number | null>>().notNull(),
		covariance: json<number[][]>().notNull(),
		/** RMS per residual kind, n used, cross-validated error, outliers, fitted pressure range… */
		summary: json<Record<string, unknown>>().notNull(),
		sessionIds: json<number[]>().notNull(),
		notes: text(),
		createdBy: int()
			.notNull()
			.references(() => users.id),
		createdAt: created(),
		approvedBy: int().references(() => users.id),
		approvedAt: optionalTime(),
		supersededAt: optionalTime()
	},
	(t) => [index('calibrations_pair_status_idx').on(t.rigId, t.projectileId, t.status)]
);

/** A shot left out of a calibration, with the reason a person gave (required). */
export const calibrationExclusions = mysqlTable(
	'calibration_exclusions',
	{
		calibrationId: int()
			.notNull()
			.references(() => calibrations.id, { onDelete: 'cascade' }),
		shotId: bigint({ mode: 'number' })
			.notNull()
			.references(() => shots.id),
		reason: varchar({ length: 500 }).notNull()
	},
	(t) => [uniqueIndex('calibration_exclusions_pk').on(t.calibrationId, t.shotId)]
);

/**
 * What a shot's speed was judged on against its test plan (design/product.md, "Details the
 * issues leave open"): the muzzle chronograph for a plan at the muzzle; for a plan at the target,
 * the downrange chronograph when the shot has a reading, else the model's speed at the target
 * plane flown from the measured muzzle speed.
 */
export const SPEED_BASES = ['muzzle_chronograph', 'downrange_chronograph', 'model_from_muzzle'] as const;
export type SpeedBasis = (typeof SPEED_BASES)[number];

/** The model's prediction for one shot under the calibration in force, and the residuals. */
export const shotPredictions = mysqlTable('shot_predictions', {
	shotId: bigint({ mode: 'number' })
		.primaryKey()
		.references(() => shots.id, { onDelete: 'cascade' }),
	/** Null when nominal (uncalibrated) values were used. */
	calibrationId: int().references(() => calibrations.id),
	predictedMuzzleMps: double(),
	predictedTargetMps: double(),
	predictedDownrangeMps: double(),
	predictedImpactXM: double('predicted_impact_x_m'),
	predictedImpactYM: double('predicted_impact_y_m'),
	muzzleResidualMps: double(),
	downrangeResidualMps: double(),
	impactXResidualM: double(),
	impactYResidualM: double(),
	passSpeed: boolean(),
	passImpact: boolean(),
	/** What passSpeed was judged on; null when the speed was not judged (no plan or no speed). */
	speedBasis: mysqlEnum(SPEED_BASES),
	/** The speed compared with the plan's required speed, m/s. */
	judgedSpeedMps: double(),
	/** The fill pressure lies outside the calibration's fitted range: the prediction extrapolates. */
	outsideCalibratedPressures: boolean().notNull().default(false),
	/** Why the model could not predict this shot (e.g. it stays in the barrel); null when it could. */
	predictionError: varchar({ length: 500 }),
	computedAt: created()
});

export const auditEvents = mysqlTable(
	'audit_events',
	{
		id: bigint({ mode: 'number' }).autoincrement().primaryKey(),
		at: created(),
		userId: int().references(() => users.id),
		action: varchar({ length: 60 }).notNull(),
		entityType: varchar({ length: 40 }).notNull(),
		entityId: varchar({ length: 64 }),
		before: json(),
		after: json()
	},
	(t) => [index('audit_entity_idx').on(t.entityType, t.entityId), index('audit_at_idx').on(t.at)]
);

export const apiTokens = mysqlTable(
	'api_tokens',
	{
		id: int().autoincrement().primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id),
		name: varchar({ length: 120 }).notNull(),
		/** SHA-256 of the token; the token itself is shown once and never stored. */
		tokenHash: char({ length: 64 }).notNull(),
		/** First characters, so a user can tell tokens apart. */
		prefix: varchar({ length: 16 }).notNull(),
		createdAt: created(),
		lastUsedAt: optionalTime(),
		revokedAt: optionalTime()
	},
	(t) => [uniqueIndex('api_tokens_hash_unique').on(t.tokenHash)]
);

/** One-time links for invitations and password resets (hashed, expiring, single use). */
export const passwordTokens = mysqlTable(
	'password_tokens',
	{
		id: int().autoincrement().primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id),
		purpose: mysqlEnum(['invite', 'reset']).notNull(),
		tokenHash: char({ length: 64 }).notNull(),
		expiresAt: datetime({ mode: 'date', fsp: 3 }).notNull(),
		usedAt: optionalTime(),
		createdAt: created()
	},
	(t) => [uniqueIndex('password_tokens_hash_unique').on(t.tokenHash)]
);

/**
 * Sign-in attempts per key ("account:<email>" or "address:<ip>"), as rate-limiter-flexible's
 * MySQL store keeps them: one row per key, counted up in one INSERT … ON DUPLICATE KEY UPDATE
 * inside a transaction (so parallel attempts cannot all read "below the limit"). The library
 * writes positional VALUES (key, points, expire): keep these three columns in this order.
 */
export const signInLimits = mysqlTable('sign_in_limits', {
	key: varchar({ length: 255 }).primaryKey(),
	points: int().notNull().default(0),
	/** Unix time in milliseconds when the count starts again from zero. */
	expire: bigint({ mode: 'number', unsigned: true })
});

/** Outgoing e-mail waiting for, or done with, the SMTP server (mail/outbox.ts sends it). */
export const mailOutbox = mysqlTable(
	'mail_outbox',
	{
		id: bigint({ mode: 'number' }).autoincrement().primaryKey(),
		/** What the message is about, e.g. "session_report", with its record (a session id). */
		kind: varchar({ length: 40 }).notNull(),
		entityId: varchar({ length: 64 }),
		recipient: varchar({ length: 254 }).notNull(),
		subject: varchar({ length: 300 }).notNull(),
		body: text().notNull(),
		status: mysqlEnum(MAIL_STATUSES).notNull().default('pending'),
		attempts: int().notNull().default(0),
		/** Not sent before this time (the backoff after a failed attempt). */
		nextAttemptAt: datetime({ mode: 'date', fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`),
		/** The worker sending it now (one app instance), and since when; null when nobody is. */
		claimedBy: varchar({ length: 64 }),
		claimedAt: optionalTime(),
		lastError: varchar({ length: 500 }),
		sentAt: optionalTime(),
		createdAt: created()
	},
	(t) => [index('mail_outbox_due_idx').on(t.status, t.nextAttemptAt), index('mail_outbox_entity_idx').on(t.kind, t.entityId)]
);

/** Saved CSV column mappings, reused for the next file from the same chronograph. */
export const importTemplates = mysqlTable(
	'import_templates',
	{
		id: int().autoincrement().primaryKey(),
		name: varchar({ length: 120 }).notNull(),
		mapping: json<Record<string, unknown>>().notNull(),
		createdBy: int()
			.notNull()
			.references(() => users.id),
		createdAt: created()
	},
	(t) => [uniqueIndex('import_templates_name_unique').on(t.name)]
);
