// The OpenAPI 3.1 document of /api/v1, generated from the same zod schemas that validate the
// requests (z.toJSONSchema; io 'input' for bodies, 'output' for answers), plus a route table
// that says what each path does, who may call it and what it answers. The API page of the app
// renders this same document (apiReference), so the page, the document and the validation
// cannot disagree. A route file without an entry here fails the API tests.
import { z } from 'zod';
import { ROLE_LABELS, ROLE_ORDER, type Role } from '$lib/roles';
import { issueTokenSchema } from '$lib/schemas/accounts';
import { predictionInput, projectileProperties, rigGeometry } from '$lib/schemas/prediction';
import { setupSheetInput, setupSheetOutput } from '$lib/schemas/setup-sheet';
import {
	projectileInput,
	rangeSessionInput,
	rigInput,
	shotInput,
	shotUpdate,
	shotVoid,
	testPlanInput
} from '$lib/schemas/range';
import { MAX_PAGE_SIZE } from './listing';
import { importRecordSchema, importRefusalSchema, importUploadSchema, IMPORT_UPLOAD_EXAMPLE } from './imports/openapi';
import { SESSION_SORTS } from './sessions';
import { approvedCalibration, calibrationDetail, calibrationFitInput, calibrationList } from './calibrations/api';
import { SPEED_BASES } from './db/schema';
import { DRAG_LAWS, LAUNCHER_FAMILIES } from '$lib/physics/launcher/model';

export const API_VERSION = '1.0.0';

type Method = 'get' | 'post' | 'patch' | 'delete';
/** Lowest role that may call the operation; 'public' needs no sign-in. */
type Access = Role | 'public';
type JsonSchema = Record<string, unknown>;

type Parameter = { name: string; in: 'path' | 'query'; description: string; required?: boolean; schema: JsonSchema };

type Operation = {
	method: Method;
	path: string;
	operationId: string;
	tag: string;
	summary: string;
	description?: string;
	access: Access;
	parameters?: Parameter[];
	/** Name of the component schema of the JSON body, and an example that it accepts. */
	body?: { schema: ComponentName; example: unknown };
	/** A multipart/form-data body instead (file uploads): its fields' schema and example values. */
	multipart?: { schema: ComponentName; example: Record<string, string> };
	/** Success answers: status, what it means, component schema of the body. */
	responses: { status: number; description: string; schema?: ComponentName }[];
	/** Refusals besides 401 (added for every non-public operation). */
	errors: number[];
};

// ---------------------------------------------------------------------------------------------
// Answer schemas. The requests' schemas come from $lib/schemas; these describe what comes back.

const dateTime = z.iso.datetime();
const stamps = { deletedAt: dateTime.nullable(), createdAt: dateTime, updatedAt: dateTime };
const page = <T extends z.ZodType>(row: T) =>
	z.object({
		rows: z.array(row),
		total: z.int().meta({ description: 'Rows matching the filters, on all pages.' }),
		page: z.int(),
		pageSize: z.int(),
		pages: z.int()
	});

const rig = z.object({ id: z.int(), ...rigInput.shape, ...stamps });
const projectile = z.object({ id: z.int(), ...projectileInput.shape, ...stamps });
const testPlan = z.object({ id: z.int(), ...testPlanInput.shape, ownerId: z.int().nullable(), ...stamps });
const rangeSession = z.object({
	id: z.int(),
	...rangeSessionInput.shape,
	status: z.enum(['open', 'closed']),
	closedAt: dateTime.nullable(),
	closedBy: z.int().nullable(),
	createdBy: z.int().nullable(),
	...stamps
});
const sessionRow = z.object({
	id: z.int(),
	title: z.string(),
	status: z.enum(['open', 'closed']),
	startedAt: dateTime,
	closedAt: dateTime.nullable(),
	rigId: z.int(),
	rig: z.string().meta({ description: 'Rig name.' }),
	projectile: z.string().meta({ description: 'Projectile name.' }),
	plan: z.string().nullable().meta({ description: 'Test plan name.' }),
	targetDistanceM: z.number().meta({ unit: 'm' }),
	shotCount: z.int()
});
const sessionDetail = rangeSession.extend({
	airDensityKgM3: z.number().nullable().meta({ unit: 'kg/m³', description: 'CIPM-2007 moist-air density of the session’s conditions.' }),
	rig,
	projectile,
	plan: testPlan.nullable()
});
const reportMailQueued = z.object({ sessionId: z.int(), leadsQueued: z.int().meta({ description: 'Active leads the report is queued for.' }) });
const closedSession = rangeSession.extend({
	leadsMailed: z.int().nullable().meta({ description: 'Leads the close-out report is queued for (the mail outbox sends it and retries).' }),
	mailError: z.string().nullable().meta({ description: 'Always null: the report is queued, so closing never fails on mail.' })
});
const shotPrediction = z
	.object({
		shotId: z.int(),
		calibrationId: z.int().nullable().meta({ description: 'Null: nominal (uncalibrated) values.' }),
		predictedMuzzleMps: z.number().nullable().meta({ unit: 'm/s' }),
		predictedTargetMps: z.number().nullable().meta({ unit: 'm/s' }),
		predictedDownrangeMps: z.number().nullable().meta({ unit: 'm/s' }),
		predictedImpactXM: z.number().nullable().meta({ unit: 'm' }),
		predictedImpactYM: z.number().nullable().meta({ unit: 'm' }),
		muzzleResidualMps: z.number().nullable().meta({ unit: 'm/s', description: 'Measured − predicted.' }),
		downrangeResidualMps: z.number().nullable().meta({ unit: 'm/s' }),
		impactXResidualM: z.number().nullable().meta({ unit: 'm' }),
		impactYResidualM: z.number().nullable().meta({ unit: 'm' }),
		passSpeed: z.boolean().nullable(),
		passImpact: z.boolean().nullable(),
		speedBasis: z.enum(SPEED_BASES).nullable(),
		judgedSpeedMps: z.number().nullable().meta({ unit: 'm/s' }),
		outsideCalibratedPressures: z.boolean(),
		predictionError: z.string().nullable(),
		computedAt: dateTime
	})
	.nullable();
const shot = z.object({
	id: z.int(),
	sessionId: z.int(),
	...shotInput.shape,
	sequence: z.int(),
	firedAt: dateTime,
	enteredBy: z.int().nullable(),
	importId: z.int().nullable(),
	aboveRating: z.boolean().meta({ description: 'Fired above the rig’s rated working pressure, confirmed by the officer: a safety event (audited, mailed to the leads).' }),
	voidedAt: dateTime.nullable().meta({ description: 'Voided at the firing line: the shot stays in the record, out of the statistics.' }),
	voidReason: z.string().nullable().meta({ description: 'Why the shot was voided.' }),
	voidedBy: z.int().nullable().meta({ description: 'Who voided it.' }),
	...stamps,
	prediction: shotPrediction
});
const setupPrediction = z.object({
	rig: z.object({ id: z.int().nullable(), name: z.string().nullable() }),
	projectile: z.object({ id: z.int().nullable(), name: z.string().nullable() }),
	calibration: z.object({
		status: z.enum(['calibrated', 'uncalibrated']),
		calibrationId: z.int().nullable(),
		approvedAt: dateTime.nullable(),
		model: z.object({
			family: z.enum(LAUNCHER_FAMILIES),
			drag: z.enum(DRAG_LAWS).meta({ description: 'constant: dragCoefficient is C_D; sphere: it is a factor on the Morrison sphere correlation C_D(Re).' })
		}),
		parameters: z.object({
			efficiency: z.number().meta({ description: 'η0 (gas work), dimensionless.' }),
			pressureSlope: z.number().meta({ description: 'η1, dimensionless: change of η per relative change of fill pressure from pRefPa.' }),
			pRefPa: z.number().meta({ unit: 'Pa' }),
			energyOffsetJ: z.number().meta({ unit: 'J', description: 'Energy term E of the gas-work family, either sign.' }),
			valveAreaM2: z.number().meta({ unit: 'm²', description: 'Effective valve area C·A_v (valve flow).' }),
			openingTimeS: z.number().meta({ unit: 's', description: 'Valve opening time τ (valve flow).' }),
			frictionN: z.number().meta({ unit: 'N', description: 'Friction in the bore (valve flow).' }),
			dragCoefficient: z.number(),
			elevationBiasDeg: z.number().meta({ unit: '°' })
		}),
		note: z.string()
	}),
	airDensityKgM3: z.number().meta({ unit: 'kg/m³' }),
	efficiency: z.number().nullable(),
	muzzleSpeedMps: z.number().meta({ unit: 'm/s' }),
	downrange: z.object({ distanceM: z.number().meta({ unit: 'm' }), speedMps: z.number().meta({ unit: 'm/s' }) }).nullable(),
	target: z.object({
		reached: z.boolean(),
		timeS: z.number().meta({ unit: 's' }),
		heightM: z.number().meta({ unit: 'm', description: 'From the aim point, + up.' }),
		heightAboveGroundM: z.number().meta({ unit: 'm' }),
		lateralM: z.number().meta({ unit: 'm', description: '+ to the right.' }),
		speedMps: z.number().meta({ unit: 'm/s' }),
		downrangeM: z.number().meta({ unit: 'm' })
	}),
	outsideCalibratedPressures: z.boolean(),
	warnings: z.array(z.string())
});
const apiErrorSchema = z.object({
	message: z.string(),
	issues: z.array(z.object({ path: z.string().meta({ description: 'The field at fault, e.g. "muzzleSpeedMps"; empty for the whole body.' }), message: z.string() }))
});
const me = z.object({
	id: z.int(),
	email: z.string(),
	name: z.string(),
	role: z.enum(ROLE_ORDER),
	unitPreferences: z.record(z.string(), z.string()),
	authenticatedBy: z.enum(['session', 'token'])
});
const issuedToken = z.object({ id: z.int(), name: z.string(), token: z.string().meta({ description: 'Shown once: keep it; only its hash is stored.' }) });
const healthReport = z.object({
	ok: z.boolean(),
	database: z.string(),
	migration: z.object({ applied: z.string().nullable(), expected: z.string().nullable(), pending: z.boolean() })
});

/** A PATCH body: any subset of the create fields (stored values fill in the rest). */
const patchOf = (schema: z.ZodObject) => z.object(schema.shape).partial();

const COMPONENTS = {
	RigInput: { schema: rigInput, io: 'input' },
	RigPatch: { schema: patchOf(rigInput), io: 'input' },
	Rig: { schema: rig, io: 'output' },
	RigPage: { schema: page(rig), io: 'output' },
	ProjectileInput: { schema: projectileInput, io: 'input' },
	ProjectilePatch: { schema: patchOf(projectileInput), io: 'input' },
	Projectile: { schema: projectile, io: 'output' },
	ProjectilePage: { schema: page(projectile), io: 'output' },
	TestPlanInput: { schema: testPlanInput, io: 'input' },
	TestPlanPatch: { schema: patchOf(testPlanInput), io: 'input' },
	TestPlan: { schema: testPlan, io: 'output' },
	TestPlanPage: { schema: page(testPlan), io: 'output' },
	RangeSessionInput: { schema: rangeSessionInput, io: 'input' },
	RangeSessionPatch: { schema: patchOf(rangeSessionInput), io: 'input' },
	RangeSession: { schema: rangeSession, io: 'output' },
	RangeSessionDetail: { schema: sessionDetail, io: 'output' },
	ClosedRangeSession: { schema: closedSession, io: 'output' },
	ReportMailQueued: { schema: reportMailQueued, io: 'output' },
	RangeSessionPage: { schema: page(sessionRow), io: 'output' },
	ShotInput: { schema: shotInput, io: 'input' },
	ShotUpdate: { schema: shotUpdate, io: 'input' },
	ShotVoid: { schema: shotVoid, io: 'input' },
	Shot: { schema: shot, io: 'output' },
	ShotPage: { schema: page(shot), io: 'output' },
	RigGeometry: { schema: rigGeometry, io: 'input' },
	ProjectileProperties: { schema: projectileProperties, io: 'input' },
	PredictionInput: { schema: predictionInput, io: 'input' },
	SetupPrediction: { schema: setupPrediction, io: 'output' },
	SetupSheetInput: { schema: setupSheetInput, io: 'input' },
	SetupSheet: { schema: setupSheetOutput, io: 'output' },
	Me: { schema: me, io: 'output' },
	TokenRequest: { schema: issueTokenSchema, io: 'input' },
	IssuedToken: { schema: issuedToken, io: 'output' },
	Health: { schema: healthReport, io: 'output' },
	ImportUpload: { schema: importUploadSchema, io: 'input' },
	ImportRecord: { schema: importRecordSchema, io: 'output' },
	ImportRefusal: { schema: importRefusalSchema, io: 'output' },
	CalibrationFitInput: { schema: calibrationFitInput, io: 'input' },
	Calibration: { schema: calibrationDetail, io: 'output' },
	ApprovedCalibration: { schema: approvedCalibration, io: 'output' },
	CalibrationList: { schema: calibrationList, io: 'output' },
	ApiError: { schema: apiErrorSchema, io: 'output' }
} satisfies Record<string, { schema: z.ZodType; io: 'input' | 'output' }>;

type ComponentName = keyof typeof COMPONENTS;

// ---------------------------------------------------------------------------------------------
// The route table.

const idParameter = (what: string): Parameter => ({
	name: 'id',
	in: 'path',
	required: true,
	description: `Id of the ${what}.`,
	schema: { type: 'integer', minimum: 1 }
});
const query = (name: string, description: string, schema: JsonSchema): Parameter => ({ name, in: 'query', description, schema });
const paging = (defaultSize: number): Parameter[] => [
	query('page', 'Page number, from 1.', { type: 'integer', minimum: 1, default: 1 }),
	query('pageSize', `Rows per page, at most ${MAX_PAGE_SIZE}.`, { type: 'integer', minimum: 1, maximum: MAX_PAGE_SIZE, default: defaultSize }),
	query('deleted', 'List the soft-deleted rows instead of the live ones.', { type: 'string', enum: ['1', '0', 'true', 'false'], default: '0' })
];
const listing = (sorts: readonly string[], defaultSort: string, defaultDir: 'asc' | 'desc'): Parameter[] => [
	query('q', 'Search text (contained in the name or title), at most 200 characters.', { type: 'string', maxLength: 200 }),
	query('sort', 'Sort column.', { type: 'string', enum: [...sorts], default: defaultSort }),
	query('dir', 'Sort direction.', { type: 'string', enum: ['asc', 'desc'], default: defaultDir }),
	...paging(25)
];

const EXAMPLES = {
	rig: {
		name: 'R7 · 30 mm test launcher',
		reservoirM3: 0.003,
		deadM3: 0.00008,
		boreDiameterM: 0.0305,
		travelM: 1.5,
		ratedPressurePa: 800000,
		valveType: 'Pilot-operated diaphragm valve',
		nominalEfficiency: 0.6,
		notes: 'Reservoir proof-tested to 1.5 × rating.'
	},
	projectile: { name: 'Ice ball 35 mm', massKg: 0.0206, diameterM: 0.035, lengthM: 0.035, shape: 'sphere', nominalDragCoefficient: 0.47 },
	plan: { name: 'Hail 35 mm at 27.2 m/s', speedAt: 'target', requiredSpeedMps: 27.2, speedTolerancePct: 5, impactToleranceM: 0.02, targetDistanceM: 6, shotsRequired: 11 },
	session: {
		title: 'H1 morning run',
		rigId: 1,
		projectileId: 1,
		testPlanId: 1,
		startedAt: '2026-03-02T08:30:00Z',
		targetDistanceM: 5,
		elevationDeg: 0.8,
		azimuthDeg: 0,
		launchHeightM: 1.2,
		aimHeightM: 1.2,
		downrangeChronoM: 4.5,
		temperatureC: 6,
		pressurePa: 101300,
		relativeHumidity: 0.7,
		windXMps: 0,
		windZMps: 0
	},
	shot: { clientUuid: '6f1c2a8e-3b4d-4e5f-9a0b-1c2d3e4f5a6b', fillGaugePa: 210000, muzzleSpeedMps: 24.31, downrangeSpeedMps: 23.02, impactXM: 0.004, impactYM: -0.007, miss: false },
	prediction: {
		rigId: 1,
		projectileId: 1,
		fillGaugePa: 200000,
		targetDistanceM: 5,
		elevationDeg: 0.8,
		launchHeightM: 1.2,
		aimHeightM: 1.2,
		downrangeChronoM: 4.5,
		temperatureC: 6,
		pressurePa: 101300,
		relativeHumidity: 0.7
	}
};

const registryOperations = (o: {
	tag: string;
	plural: string;
	noun: string;
	base: string;
	id: string;
	editRole: Role;
	sorts: readonly string[];
	defaultSort: string;
	input: ComponentName;
	patch: ComponentName;
	record: ComponentName;
	page: ComponentName;
	example: Record<string, unknown>;
	patchExample: Record<string, unknown>;
}): Operation[] => [
	{
		method: 'get',
		path: o.base,
		operationId: `list${o.id}s`,
		tag: o.tag,
		summary: `List ${o.plural}`,
		description: `Searched, sorted and paged in the database.`,
		access: 'viewer',
		parameters: listing(o.sorts, o.defaultSort, 'asc'),
		responses: [{ status: 200, description: `A page of ${o.plural}.`, schema: o.page }],
		errors: [400]
	},
	{
		method: 'post',
		path: o.base,
		operationId: `create${o.id}`,
		tag: o.tag,
		summary: `Create a ${o.noun}`,
		description: 'Recorded with an audit event. Names are unique (deleted records included).',
		access: o.editRole,
		body: { schema: o.input, example: o.example },
		responses: [{ status: 201, description: `The new ${o.noun}.`, schema: o.record }],
		errors: [400, 403, 409]
	},
	{
		method: 'get',
		path: `${o.base}/{id}`,
		operationId: `get${o.id}`,
		tag: o.tag,
		summary: `Get a ${o.noun}`,
		description: 'Soft-deleted records are returned too, with deletedAt set.',
		access: 'viewer',
		parameters: [idParameter(o.noun)],
		responses: [{ status: 200, description: `The ${o.noun}.`, schema: o.record }],
		errors: [404]
	},
	{
		method: 'patch',
		path: `${o.base}/{id}`,
		operationId: `update${o.id}`,
		tag: o.tag,
		summary: `Change a ${o.noun}`,
		description: 'Send only the fields to change; the result is validated as a whole. Audited.',
		access: o.editRole,
		parameters: [idParameter(o.noun)],
		body: { schema: o.patch, example: o.patchExample },
		responses: [{ status: 200, description: `The ${o.noun} as stored now.`, schema: o.record }],
		errors: [400, 403, 404, 409]
	},
	{
		method: 'delete',
		path: `${o.base}/{id}`,
		operationId: `delete${o.id}`,
		tag: o.tag,
		summary: `Delete a ${o.noun} (soft)`,
		description: 'The record stays (sessions and shots keep pointing at it) and can be restored on its page. Audited.',
		access: o.editRole,
		parameters: [idParameter(o.noun)],
		responses: [{ status: 200, description: `The ${o.noun}, with deletedAt set.`, schema: o.record }],
		errors: [403, 404]
	}
];

export const OPERATIONS: Operation[] = [
	{
		method: 'get',
		path: '/api/v1/health',
		operationId: 'getHealth',
		tag: 'Service',
		summary: 'Health of the service',
		description: 'Database reachability and migration state; 503 while the database is not usable.',
		access: 'public',
		responses: [
			{ status: 200, description: 'Healthy.', schema: 'Health' },
			{ status: 503, description: 'Not usable (same body, ok: false).', schema: 'Health' }
		],
		errors: []
	},
	{
		method: 'get',
		path: '/api/v1/openapi.json',
		operationId: 'getOpenApi',
		tag: 'Service',
		summary: 'This API description (OpenAPI 3.1)',
		access: 'public',
		responses: [{ status: 200, description: 'The OpenAPI document.' }],
		errors: []
	},
	{
		method: 'post',
		path: '/api/v1/tokens',
		operationId: 'issueToken',
		tag: 'Access',
		summary: 'Trade e-mail and password for an API token',
		description:
			'For scripts without a browser. Wrong passwords count towards the sign-in rate limit (429 when exceeded). Tokens can also be made and revoked on the profile page.',
		access: 'public',
		body: { schema: 'TokenRequest', example: { email: 'officer@northfold-range.test', password: 'your password', name: 'chronograph uploader' } },
		responses: [{ status: 201, description: 'The token, shown this once.', schema: 'IssuedToken' }],
		errors: [400, 401, 429]
	},
	{
		method: 'get',
		path: '/api/v1/me',
		operationId: 'getMe',
		tag: 'Access',
		summary: 'Who the caller is',
		description: 'A quick check of a token: the user it acts for, with their role as stored now.',
		access: 'viewer',
		responses: [{ status: 200, description: 'The signed-in user.', schema: 'Me' }],
		errors: []
	},
	...registryOperations({
		tag: 'Rigs',
		plural: 'rigs',
		noun: 'rig',
		base: '/api/v1/rigs',
		id: 'Rig',
		editRole: 'analyst',
		sorts: ['name', 'ratedPressurePa', 'boreDiameterM', 'updatedAt'],
		defaultSort: 'name',
		input: 'RigInput',
		patch: 'RigPatch',
		record: 'Rig',
		page: 'RigPage',
		example: EXAMPLES.rig,
		patchExample: { ratedPressurePa: 1000000, notes: 'Re-rated after the new reservoir passed its proof test.' }
	}),
	...registryOperations({
		tag: 'Projectiles',
		plural: 'projectiles',
		noun: 'projectile',
		base: '/api/v1/projectiles',
		id: 'Projectile',
		editRole: 'analyst',
		sorts: ['name', 'massKg', 'diameterM', 'updatedAt'],
		defaultSort: 'name',
		input: 'ProjectileInput',
		patch: 'ProjectilePatch',
		record: 'Projectile',
		page: 'ProjectilePage',
		example: EXAMPLES.projectile,
		patchExample: { massKg: 0.0204 }
	}),
	...registryOperations({
		tag: 'Test plans',
		plural: 'test plans',
		noun: 'test plan',
		base: '/api/v1/plans',
		id: 'TestPlan',
		editRole: 'lead',
		sorts: ['name', 'requiredSpeedMps', 'targetDistanceM', 'updatedAt'],
		defaultSort: 'name',
		input: 'TestPlanInput',
		patch: 'TestPlanPatch',
		record: 'TestPlan',
		page: 'TestPlanPage',
		example: EXAMPLES.plan,
		patchExample: { shotsRequired: 13 }
	}),
	{
		method: 'get',
		path: '/api/v1/sessions',
		operationId: 'listSessions',
		tag: 'Range sessions',
		summary: 'List range sessions',
		description: 'Newest first unless sorted otherwise; with each session’s count of live shots.',
		access: 'viewer',
		parameters: [
			...listing(SESSION_SORTS, 'startedAt', 'desc'),
			query('rigId', 'Only this rig’s sessions.', { type: 'integer', minimum: 1 }),
			query('status', 'Only open or only closed sessions.', { type: 'string', enum: ['open', 'closed'] }),
			query('from', 'Started at or after (ISO 8601).', { type: 'string', format: 'date-time' }),
			query('to', 'Started at or before (ISO 8601).', { type: 'string', format: 'date-time' })
		],
		responses: [{ status: 200, description: 'A page of sessions.', schema: 'RangeSessionPage' }],
		errors: [400]
	},
	{
		method: 'post',
		path: '/api/v1/sessions',
		operationId: 'createSession',
		tag: 'Range sessions',
		summary: 'Open a range session',
		description: 'One sitting on one rig with one projectile type and fixed geometry. The rig, projectile and plan must be in the registry (not deleted).',
		access: 'range_officer',
		body: { schema: 'RangeSessionInput', example: EXAMPLES.session },
		responses: [{ status: 201, description: 'The new, open session.', schema: 'RangeSession' }],
		errors: [400, 403]
	},
	{
		method: 'get',
		path: '/api/v1/sessions/{id}',
		operationId: 'getSession',
		tag: 'Range sessions',
		summary: 'Get a range session',
		description: 'With its rig, projectile, test plan and the air density of its conditions.',
		access: 'viewer',
		parameters: [idParameter('range session')],
		responses: [{ status: 200, description: 'The session.', schema: 'RangeSessionDetail' }],
		errors: [404]
	},
	{
		method: 'patch',
		path: '/api/v1/sessions/{id}',
		operationId: 'updateSession',
		tag: 'Range sessions',
		summary: 'Change a range session',
		description: 'Send only the fields to change. A closed session is locked: only a lead may change it, and the change is audited as such.',
		access: 'range_officer',
		parameters: [idParameter('range session')],
		body: { schema: 'RangeSessionPatch', example: { temperatureC: 8.5, windZMps: 0.4 } },
		responses: [{ status: 200, description: 'The session as stored now.', schema: 'RangeSession' }],
		errors: [400, 403, 404]
	},
	{
		method: 'delete',
		path: '/api/v1/sessions/{id}',
		operationId: 'deleteSession',
		tag: 'Range sessions',
		summary: 'Delete a range session (soft)',
		description: 'The session and its shots stay in the record and can be restored on its page. Closed sessions: lead only.',
		access: 'range_officer',
		parameters: [idParameter('range session')],
		responses: [{ status: 200, description: 'The session, with deletedAt set.', schema: 'RangeSession' }],
		errors: [403, 404]
	},
	{
		method: 'post',
		path: '/api/v1/sessions/{id}/close',
		operationId: 'closeSession',
		tag: 'Range sessions',
		summary: 'Close a range session',
		description: 'Locks the session (later edits need a lead) and queues the close-out report for the leads (sent by the mail outbox, retried when the mail server is down). No body.',
		access: 'range_officer',
		parameters: [idParameter('range session')],
		responses: [{ status: 200, description: 'The closed session and how many leads the report is queued for.', schema: 'ClosedRangeSession' }],
		errors: [403, 404, 409]
	},
	{
		method: 'post',
		path: '/api/v1/sessions/{id}/report-mail',
		operationId: 'resendSessionReport',
		tag: 'Range sessions',
		summary: 'Send a closed session’s report to the leads again',
		description: 'Queues the close-out report once more for every active lead (say, after the mail server was down). No body. Audited.',
		access: 'lead',
		parameters: [idParameter('range session')],
		responses: [{ status: 202, description: 'How many leads the report is queued for.', schema: 'ReportMailQueued' }],
		errors: [403, 404, 409]
	},
	{
		method: 'get',
		path: '/api/v1/sessions/{id}/shots',
		operationId: 'listShots',
		tag: 'Shots',
		summary: 'List a session’s shots',
		description: 'In sequence order, each with its prediction, residuals and pass/fail against the plan.',
		access: 'viewer',
		parameters: [
			idParameter('range session'),
			...paging(100),
			query('from', 'Lowest sequence number.', { type: 'integer', minimum: 1 }),
			query('to', 'Highest sequence number.', { type: 'integer', minimum: 1 })
		],
		responses: [{ status: 200, description: 'A page of shots.', schema: 'ShotPage' }],
		errors: [400, 404]
	},
	{
		method: 'post',
		path: '/api/v1/sessions/{id}/shots',
		operationId: 'logShot',
		tag: 'Shots',
		summary: 'Log a shot',
		description:
			'Idempotent by clientUuid: make a UUID per shot on the client and resend freely; a resend answers 200 with the stored shot and changes nothing. Without a sequence the server assigns the next free one (distinct across tablets). A closed session refuses new shots except from a lead. A fill pressure above the rig’s rated working pressure is refused as a likely typo (422, issue on fillGaugePa) unless the body says "aboveRatingConfirmed": true; a confirmed one is stored with aboveRating set, audited and mailed to the leads.',
		access: 'range_officer',
		parameters: [idParameter('range session')],
		body: { schema: 'ShotInput', example: EXAMPLES.shot },
		responses: [
			{ status: 201, description: 'The new shot, with its prediction.', schema: 'Shot' },
			{ status: 200, description: 'This clientUuid was logged before: the stored shot.', schema: 'Shot' },
			{
				status: 422,
				description: 'fillGaugePa is above the rig’s rated working pressure and aboveRatingConfirmed is not true: check the reading, or confirm it was really fired so.',
				schema: 'ApiError'
			}
		],
		errors: [400, 403, 404, 409]
	},
	{
		method: 'get',
		path: '/api/v1/shots/{id}',
		operationId: 'getShot',
		tag: 'Shots',
		summary: 'Get a shot',
		description: 'With its prediction and residuals; soft-deleted shots have deletedAt set.',
		access: 'viewer',
		parameters: [idParameter('shot')],
		responses: [{ status: 200, description: 'The shot.', schema: 'Shot' }],
		errors: [404]
	},
	{
		method: 'patch',
		path: '/api/v1/shots/{id}',
		operationId: 'updateShot',
		tag: 'Shots',
		summary: 'Edit a shot',
		description: 'Send only the fields to change; the prediction and residuals are recomputed. Audited; in a closed session, lead only.',
		access: 'analyst',
		parameters: [idParameter('shot')],
		body: { schema: 'ShotUpdate', example: { muzzleSpeedMps: 24.18, note: 'Chronograph re-read from the video.' } },
		responses: [{ status: 200, description: 'The shot as stored now.', schema: 'Shot' }],
		errors: [400, 403, 404, 409]
	},
	{
		method: 'post',
		path: '/api/v1/shots/{id}/void',
		operationId: 'voidShot',
		tag: 'Shots',
		summary: 'Void a shot',
		description:
			'Void and re-shoot: the shot stays in the record with its reason and voidedAt set, shown as voided, and leaves the statistics and the plan’s count. A range officer may void the shots they logged while the session is open; analysts any shot. Audited.',
		access: 'range_officer',
		parameters: [idParameter('shot')],
		body: { schema: 'ShotVoid', example: { reason: 'Chronograph did not trigger.' } },
		responses: [{ status: 200, description: 'The shot, with voidedAt and voidReason set.', schema: 'Shot' }],
		errors: [400, 403, 404]
	},
	{
		method: 'delete',
		path: '/api/v1/shots/{id}',
		operationId: 'deleteShot',
		tag: 'Shots',
		summary: 'Delete a shot (soft)',
		description: 'The shot stays in the record with deletedAt set and leaves the statistics. Audited; in a closed session, lead only.',
		access: 'analyst',
		parameters: [idParameter('shot')],
		responses: [{ status: 200, description: 'The shot, with deletedAt set.', schema: 'Shot' }],
		errors: [403, 404]
	},
	{
		method: 'post',
		path: '/api/v1/predictions',
		operationId: 'predictSetup',
		tag: 'Predictions',
		summary: 'Predict a setup',
		description:
			'Muzzle speed, the flight to the target plane and the air density for a fill pressure, geometry and conditions. Give the rig and the projectile by id (the approved calibration of the pair is used, if any) or inline (nominal values, marked uncalibrated). A fill pressure above the rig’s rated working pressure is refused. 422 when the model cannot predict the setup (e.g. the projectile does not leave the barrel).',
		access: 'viewer',
		body: { schema: 'PredictionInput', example: EXAMPLES.prediction },
		responses: [{ status: 200, description: 'The prediction.', schema: 'SetupPrediction' }],
		errors: [400, 404, 422]
	},
	{
		method: 'post',
		path: '/api/v1/setup-sheet',
		operationId: 'solveSetupSheet',
		tag: 'Predictions',
		summary: 'Solve a setup sheet',
		description:
			'For a test plan, a rig and a projectile of the registry and the day’s conditions: the fill pressure and elevation that hit the plan’s speed and aim point under the approved calibration of the pair (or the nominal values, marked uncalibrated), the predicted shot and trajectory, the spread to expect and the seeded Monte Carlo chance of meeting the plan, with its standard error. 422 when the sheet is refused: the plan needs a fill above the rig’s rated working pressure, or no elevation reaches the aim point. Messages use the caller’s display units; numbers are SI.',
		access: 'viewer',
		body: {
			schema: 'SetupSheetInput',
			example: { testPlanId: 2, rigId: 2, projectileId: 2, launchHeightM: 1.2, aimHeightM: 1.2, temperatureC: 15, pressurePa: 101325, relativeHumidity: 0.5, windXMps: 0, windZMps: 0 }
		},
		responses: [{ status: 200, description: 'The setup sheet.', schema: 'SetupSheet' }],
		errors: [400, 404, 422]
	},
	{
		method: 'post',
		path: '/api/v1/imports',
		operationId: 'importShots',
		tag: 'Imports',
		summary: 'Import a chronograph CSV file',
		description:
			'Multipart upload. The rows go to one session (sessionId) or to sessions named in a column (templateSessionId: titles that match no live session create one, copying that session’s rig, projectile, plan, geometry and conditions). Without a mapping (or a template name) the suggested one is used: columns by their header names, units from the headers, else from the values. Every row is checked (numbers, physical ranges, duplicate sequence numbers, units that look wrong); mode all-or-nothing refuses the file if any row is invalid, valid-rows imports the valid ones and keeps the rejected ones with their reasons. One transaction: the record (raw bytes and SHA-256 kept), the shots and their predictions. The same file twice is refused unless force is true. Send an Origin header naming this server: like every form post, a multipart upload without it is refused (403) as cross-site.',
		access: 'analyst',
		multipart: { schema: 'ImportUpload', example: IMPORT_UPLOAD_EXAMPLE },
		responses: [
			{ status: 201, description: 'Imported: the import record with counts, rejected rows and the sessions it went to.', schema: 'ImportRecord' },
			{ status: 409, description: 'The same file (SHA-256) was imported before; send force=true to import it again.', schema: 'ImportRefusal' },
			{ status: 413, description: 'The file is larger than 25 MB (or than the database keeps), or has more than 300 000 rows.', schema: 'ImportRefusal' },
			{ status: 422, description: 'Rows are invalid (all-or-nothing), or none is valid: errors lists every invalid cell with row, column and reason. Nothing was imported.', schema: 'ImportRefusal' }
		],
		errors: [400, 403, 404]
	},
	{
		method: 'get',
		path: '/api/v1/calibrations',
		operationId: 'listCalibrations',
		tag: 'Calibrations',
		summary: 'List calibrations',
		description: 'Newest first, with the model, convergence and headline values; filtered by rig, projectile and status.',
		access: 'viewer',
		parameters: [
			query('rigId', 'Only this rig’s calibrations.', { type: 'integer', minimum: 1 }),
			query('projectileId', 'Only this projectile’s calibrations.', { type: 'integer', minimum: 1 }),
			query('status', 'Only calibrations in this state.', { type: 'string', enum: ['draft', 'approved', 'superseded'] })
		],
		responses: [{ status: 200, description: 'The calibrations.', schema: 'CalibrationList' }],
		errors: [400]
	},
	{
		method: 'post',
		path: '/api/v1/calibrations',
		operationId: 'fitCalibration',
		tag: 'Calibrations',
		summary: 'Fit a draft calibration',
		description:
			'Fits the launcher model of a (rig, projectile) pair to the shots of the chosen sessions (default: every live session of the pair), leaving out the excluded shots (each with a reason, kept with the calibration), and stores a draft with an audit event. With model "auto" every candidate model the data support is fitted and cross-validated and the proposed one is kept: this takes a few seconds. A requested parameter the data cannot determine is reported and held. 404 for an unknown rig or projectile.',
		access: 'analyst',
		body: {
			schema: 'CalibrationFitInput',
			example: {
				rigId: 1,
				projectileId: 1,
				sessionIds: [1, 2],
				model: { family: 'gas-work', drag: 'constant', pressureSlope: true },
				excludedShots: [{ shotId: 17, reason: 'Valve stuck open; chronograph read a double shot.' }],
				notes: 'Spring campaign, 1.5–6 bar.'
			}
		},
		responses: [{ status: 201, description: 'The draft with its fit report.', schema: 'Calibration' }],
		errors: [400, 403, 404]
	},
	{
		method: 'get',
		path: '/api/v1/calibrations/{id}',
		operationId: 'getCalibration',
		tag: 'Calibrations',
		summary: 'Get a calibration and its fit report',
		description:
			'Model family and drag law, parameters with standard errors and 95 % intervals, correlation matrix, fitted pressure range, the model comparison (when chosen automatically), residual and cross-validated RMS per kind, noise floor, messages, sessions and exclusions.',
		access: 'viewer',
		parameters: [idParameter('calibration')],
		responses: [{ status: 200, description: 'The calibration.', schema: 'Calibration' }],
		errors: [404]
	},
	{
		method: 'post',
		path: '/api/v1/calibrations/{id}/approve',
		operationId: 'approveCalibration',
		tag: 'Calibrations',
		summary: 'Approve a draft calibration',
		description:
			'In one transaction: the pair’s approved calibration becomes superseded, this draft approved, and the residuals of every session of the pair are recomputed under it. Audited. 409 when it is not a draft or cannot be approved (the fit did not converge, or the efficiency is not determined).',
		access: 'lead',
		parameters: [idParameter('calibration')],
		responses: [{ status: 200, description: 'The approved calibration.', schema: 'ApprovedCalibration' }],
		errors: [403, 404, 409]
	}
];

const ERROR_MEANING: Record<number, string> = {
	400: 'Invalid input: the issues name each field (or URL parameter) at fault.',
	401: 'Not signed in, or the API token is unknown or revoked.',
	403: 'The caller’s role may not do this (or the session is closed).',
	404: 'No such record.',
	409: 'Conflicts with the stored state (a name or sequence number taken, a session already closed).',
	415: 'The body is not sent as JSON (Content-Type: application/json).',
	422: 'Valid input the model cannot predict.',
	429: 'Too many failed sign-ins; wait and retry.'
};

const TAG_DESCRIPTIONS: Record<string, string> = {
	Service: 'Health and this description; no sign-in needed.',
	Access: 'Tokens for scripts and the caller’s identity.',
	Rigs: 'Launchers: geometry, rated working pressure, valve type, nominal efficiency.',
	Projectiles: 'Mass, size, shape and nominal drag coefficient.',
	'Test plans': 'Acceptance targets: required speed and tolerance, impact tolerance, distance, shot count.',
	'Range sessions': 'One sitting on one rig with one projectile, fixed geometry and conditions; open → closed.',
	Shots: 'Logged shots with their predictions and residuals.',
	Predictions: 'What the model says for a setup.',
	Imports: 'Chronograph CSV files: checked row by row and imported in one transaction.',
	Calibrations: 'Model fits of a (rig, projectile) pair: analysts fit drafts, leads approve them; everyone reads the fit reports.'
};

/** Words for fields whose schema has no title of its own (identifiers, flags, choices). */
const FIELD_NOTES: Record<string, string> = {
	id: 'Identifier.',
	clientUuid: 'Made by the client for each shot; a resend with the same UUID never duplicates the shot.',
	sequence: 'Per session. Left out, the server assigns the next free number.',
	firedAt: 'When the shot was fired; left out, the time the server receives it.',
	miss: 'The shot missed the target face (it then has no impact offset).',
	note: 'Free text.',
	notes: 'Free text.',
	shape: 'Projectile shape.',
	speedAt: 'Where the required speed applies: at the muzzle or at the target plane.',
	startedAt: 'When the session started.',
	rig: 'The rig’s geometry, rating and nominal efficiency (instead of rigId).',
	projectile: 'The projectile’s mass, diameter and nominal drag coefficient (instead of projectileId).',
	email: 'E-mail address of the account.',
	password: 'Its password.',
	name: 'Name.'
};

/** Give untitled properties of an object schema (and of nested objects) their FIELD_NOTES words. */
function annotate(schema: JsonSchema) {
	const properties = schema.properties as Record<string, JsonSchema> | undefined;
	for (const [name, property] of Object.entries(properties ?? {})) {
		const described = property.title ?? property.description;
		if (described === undefined && FIELD_NOTES[name]) property.description = FIELD_NOTES[name];
		for (const inner of [property, ...((property.anyOf as JsonSchema[] | undefined) ?? [])]) if (inner.type === 'object') annotate(inner);
	}
	return schema;
}

// ---------------------------------------------------------------------------------------------
// Generation.

/** zod → JSON Schema 2020-12 (OpenAPI 3.1's dialect): dates as date-time strings, units as x-unit. */
function jsonSchemaOf(schema: z.ZodType, io: 'input' | 'output'): JsonSchema {
	const out = z.toJSONSchema(schema, {
		target: 'draft-2020-12',
		io,
		unrepresentable: 'any',
		override: (ctx) => {
			const json = ctx.jsonSchema as JsonSchema;
			if ((ctx.zodSchema as { _zod: { def: { type: string } } })._zod.def.type === 'date') {
				json.type = 'string';
				json.format = 'date-time';
			}
			if ('unit' in json) {
				json['x-unit'] = json.unit;
				delete json.unit;
			}
		}
	}) as JsonSchema;
	delete out.$schema;
	return annotate(out);
}

const ref = (name: ComponentName) => ({ $ref: `#/components/schemas/${name}` });

/**
 * The refusals of an operation: its own; for a signed-in caller also 401, and 415 when it takes a
 * body (the cookie may only write JSON, see requestJson in api.ts).
 */
function statusesOf(op: Operation) {
	if (op.access === 'public') return op.errors;
	return [401, ...op.errors, ...(op.body ? [415] : [])];
}

function operationObject(op: Operation) {
	const roleText = op.access === 'public' ? 'No sign-in needed.' : `Needs the ${ROLE_LABELS[op.access]} role or higher.`;
	const statuses = statusesOf(op);
	return {
		operationId: op.operationId,
		tags: [op.tag],
		summary: op.summary,
		description: [op.description, roleText].filter(Boolean).join(' '),
		'x-required-role': op.access,
		...(op.access === 'public' ? { security: [] } : {}),
		...(op.parameters ? { parameters: op.parameters } : {}),
		...(op.body
			? { requestBody: { required: true, content: { 'application/json': { schema: ref(op.body.schema), example: op.body.example } } } }
			: {}),
		...(op.multipart
			? { requestBody: { required: true, content: { 'multipart/form-data': { schema: ref(op.multipart.schema), example: op.multipart.example } } } }
			: {}),
		responses: Object.fromEntries([
			...op.responses.map((r) => [
				String(r.status),
				{ description: r.description, ...(r.schema ? { content: { 'application/json': { schema: ref(r.schema) } } } : {}) }
			]),
			...[...new Set(statuses)].sort().map((status) => [String(status), { $ref: `#/components/responses/Error${status}` }])
		])
	};
}

function buildDocument() {
	const paths: Record<string, Record<string, unknown>> = {};
	for (const op of OPERATIONS) (paths[op.path] ??= {})[op.method] = operationObject(op);
	const errorStatuses = [...new Set(OPERATIONS.flatMap(statusesOf))].sort();
	return {
		openapi: '3.1.0',
		jsonSchemaDialect: 'https://json-schema.org/draft/2020-12/schema',
		info: {
			title: 'Shotwright API',
			version: API_VERSION,
			summary: 'The working record of a pneumatic launcher test range.',
			description:
				'JSON over HTTP. Every quantity is in SI units (the field name ends in its unit: Pa, M, M3, Kg, Mps, Deg; air temperature in °C). Authenticate with a bearer token (`Authorization: Bearer swt_…`, made on the profile page or with POST /api/v1/tokens) or, from the browser, the session cookie. Errors are JSON: `{ message, issues: [{ path, message }] }`.'
		},
		tags: [...new Set(OPERATIONS.map((op) => op.tag))].map((name) => ({ name, description: TAG_DESCRIPTIONS[name] ?? '' })),
		security: [{ bearerToken: [] }, { sessionCookie: [] }],
		paths,
		components: {
			securitySchemes: {
				bearerToken: { type: 'http', scheme: 'bearer', bearerFormat: 'swt_… (Shotwright API token)' },
				sessionCookie: {
					type: 'apiKey',
					in: 'cookie',
					name: 'authjs.session-token',
					description: 'Set by signing in on /signin (named __Secure-authjs.session-token over https).'
				}
			},
			schemas: Object.fromEntries(Object.entries(COMPONENTS).map(([name, c]) => [name, jsonSchemaOf(c.schema, c.io)])),
			responses: Object.fromEntries(
				errorStatuses.map((status) => [
					`Error${status}`,
					{ description: ERROR_MEANING[status] ?? 'Refused.', content: { 'application/json': { schema: ref('ApiError') } } }
				])
			)
		}
	};
}

export type OpenApiDocument = ReturnType<typeof buildDocument>;

let built: OpenApiDocument | undefined;

/** The document; it depends on nothing but the code, so it is built once per process. */
export function openApiDocument(): OpenApiDocument {
	built ??= buildDocument();
	return built;
}

// ---------------------------------------------------------------------------------------------
// The API page's view of the document.

export type FieldLine = { name: string; type: string; unit: string | null; bounds: string | null; required: boolean; description: string | null };
export type ParameterLine = { name: string; in: 'path' | 'query'; type: string; bounds: string | null; required: boolean; description: string };
export type OperationView = {
	method: string;
	path: string;
	operationId: string;
	summary: string;
	description: string;
	access: Access;
	accessLabel: string;
	parameters: ParameterLine[];
	fields: FieldLine[];
	/** What the fields are sent as. */
	bodyKind: 'json' | 'multipart' | null;
	responses: { status: string; description: string }[];
	curl: string;
};
export type TagView = { name: string; description: string; operations: OperationView[] };

function resolve(doc: OpenApiDocument, schema: JsonSchema): JsonSchema {
	const target = typeof schema.$ref === 'string' ? schema.$ref.replace('#/components/schemas/', '') : null;
	return target ? (doc.components.schemas[target] as JsonSchema) : schema;
}

/** Split "X or null" into X and the fact that null is allowed. */
function unwrapNull(schema: JsonSchema): { inner: JsonSchema; nullable: boolean } {
	const anyOf = schema.anyOf as JsonSchema[] | undefined;
	if (anyOf) {
		const rest = anyOf.filter((s) => s.type !== 'null');
		if (rest.length === 1 && rest.length < anyOf.length) return { inner: { ...rest[0], ...omit(schema, 'anyOf') }, nullable: true };
	}
	if (Array.isArray(schema.type) && schema.type.includes('null')) {
		const types = schema.type.filter((t) => t !== 'null');
		return { inner: { ...schema, type: types.length === 1 ? types[0] : types }, nullable: true };
	}
	return { inner: schema, nullable: false };
}

function omit(o: JsonSchema, key: string) {
	const { [key]: _dropped, ...rest } = o;
	return rest;
}

function typeText(schema: JsonSchema): string {
	if (Array.isArray(schema.enum)) return `one of ${schema.enum.map((v) => JSON.stringify(v)).join(', ')}`;
	if (schema.format === 'uuid') return 'UUID string';
	if (schema.format === 'date-time') return 'date-time string (ISO 8601)';
	if (schema.format === 'binary') return 'file';
	if (schema.type === 'array') return 'array';
	return typeof schema.type === 'string' ? schema.type : 'any';
}

function boundsText(schema: JsonSchema): string | null {
	const parts: string[] = [];
	if (typeof schema.exclusiveMinimum === 'number') parts.push(`> ${schema.exclusiveMinimum}`);
	if (typeof schema.minimum === 'number') parts.push(`≥ ${schema.minimum}`);
	if (typeof schema.maximum === 'number' && schema.maximum < Number.MAX_SAFE_INTEGER) parts.push(`≤ ${schema.maximum}`);
	if (schema.minLength === 1) parts.push('not empty');
	else if (typeof schema.minLength === 'number' && schema.minLength > 1) parts.push(`at least ${schema.minLength} characters`);
	if (typeof schema.maxLength === 'number') parts.push(`at most ${schema.maxLength} characters`);
	if (schema.default !== undefined) parts.push(`default ${JSON.stringify(schema.default)}`);
	return parts.length ? parts.join(', ') : null;
}

function fieldLines(doc: OpenApiDocument, schema: JsonSchema, prefix = ''): FieldLine[] {
	const object = resolve(doc, schema);
	const properties = (object.properties ?? {}) as Record<string, JsonSchema>;
	const required = new Set((object.required ?? []) as string[]);
	return Object.entries(properties).flatMap(([name, property]) => {
		const { inner, nullable } = unwrapNull(property);
		const path = prefix + name;
		if (inner.type === 'object' && inner.properties)
			return [
				{ name: path, type: nullable ? 'object or null' : 'object', unit: null, bounds: null, required: required.has(name), description: (inner.title as string) ?? null },
				...fieldLines(doc, inner, `${path}.`)
			];
		return [
			{
				name: path,
				type: typeText(inner) + (nullable ? ' or null' : ''),
				unit: (inner['x-unit'] as string | undefined) ?? null,
				bounds: boundsText(inner),
				required: required.has(name) && inner.default === undefined,
				description: ((inner.description ?? inner.title) as string | undefined) ?? null
			}
		];
	});
}

function curlFor(op: Operation, origin: string) {
	const path = op.path.replace('{id}', '1');
	const lines = [`curl -sS -X ${op.method.toUpperCase()} '${origin}${path}'`];
	if (op.access !== 'public') lines.push(`  -H "Authorization: Bearer $SHOTWRIGHT_TOKEN"`);
	if (op.body) {
		lines.push(`  -H 'Content-Type: application/json'`);
		lines.push(`  -d '${JSON.stringify(op.body.example)}'`);
	}
	if (op.multipart) {
		// SvelteKit's CSRF check refuses a form post whose Origin is not the server's own.
		lines.push(`  -H 'Origin: ${origin}'`);
		for (const [name, value] of Object.entries(op.multipart.example)) lines.push(`  -F '${name}=${value}'`);
	}
	return lines.join(' \\\n');
}

/** The document grouped by tag for the API page, with field tables and example calls. */
export function apiReference(origin: string): TagView[] {
	const doc = openApiDocument();
	return doc.tags.map((tag) => ({
		name: tag.name,
		description: tag.description,
		operations: OPERATIONS.filter((op) => op.tag === tag.name).map((op) => {
			const operation = doc.paths[op.path][op.method] as ReturnType<typeof operationObject>;
			return {
				method: op.method.toUpperCase(),
				path: op.path,
				operationId: op.operationId,
				summary: op.summary,
				description: operation.description,
				access: op.access,
				accessLabel: op.access === 'public' ? 'Anyone' : `${ROLE_LABELS[op.access]} and up`,
				parameters: (op.parameters ?? []).map((p) => ({
					name: p.name,
					in: p.in,
					type: typeText(p.schema),
					bounds: boundsText(p.schema),
					required: p.required ?? false,
					description: p.description
				})),
				fields: op.body ? fieldLines(doc, ref(op.body.schema)) : op.multipart ? fieldLines(doc, ref(op.multipart.schema)) : [],
				bodyKind: op.body ? 'json' : op.multipart ? 'multipart' : null,
				responses: Object.entries(operation.responses as Record<string, { description?: string }>).map(([status, r]) => ({
					status,
					description: r.description ?? ERROR_MEANING[Number(status)] ?? ''
				})),
				curl: curlFor(op, origin)
			};
		})
	}));
}

/** For the tests: each example body is accepted by the schema it illustrates. */
export function operationExamples() {
	return OPERATIONS.filter((op) => op.body).map((op) => ({
		operationId: op.operationId,
		schema: COMPONENTS[op.body!.schema].schema as z.ZodType,
		example: op.body!.example
	}));
}
