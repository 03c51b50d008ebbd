// zod schemas of the range record, shared by forms, the REST API (and its OpenAPI document) and
// the browser. Every quantity is in SI (the field name ends in its unit); forms convert from the
// user's units at the edge. Bounds are physical sanity limits, not safety limits: the safety
// limit is each rig's rated working pressure, checked against the rig.
import { z } from 'zod';

const text = (field: string, max: number) =>
	z.string().trim().min(1, `${field} is required.`).max(max, `${field} is at most ${max} characters.`).meta({ title: field });
const notes = z.string().trim().max(4000, 'Notes are at most 4000 characters.').nullish();
/**
 * A finite number within [min, max] (inclusive unless exclusiveMin), with a message naming the
 * field. Built from zod's own bounds (not refinements) so the JSON Schema of the OpenAPI document
 * carries them; zod 4 numbers refuse ±Infinity and NaN by themselves. The title and unit travel
 * as metadata to the same document.
 */
const quantity = (field: string, min: number, max: number, unit: string, exclusiveMin = false) => {
	const number = z.number({ error: `${field} must be a number.` });
	const above = `${field} must be ${exclusiveMin ? 'more than' : 'at least'} ${min} ${unit}`.trimEnd() + '.';
	return (exclusiveMin ? number.gt(min, above) : number.gte(min, above))
		.lte(max, `${field} must be at most ${max} ${unit}`.trimEnd() + '.')
		.meta(unit ? { title: field, unit } : { title: field });
};

/** MariaDB's DATETIME range (MariaDB Knowledge Base, "DATETIME"); a time outside it cannot be stored. */
export const EARLIEST_DATETIME = new Date('1000-01-01T00:00:00.000Z');
export const LATEST_DATETIME = new Date('9999-12-31T23:59:59.999Z');

/**
 * A date and time (ISO 8601 text, milliseconds since 1970, or a Date from a form) that MariaDB can
 * store. Only those kinds are coerced: coercing null or true would quietly make them 1970.
 */
export const dateTimeField = (field: string) =>
	z
		.union([z.string(), z.number(), z.date()], { error: `${field} must be a date and time.` })
		.pipe(
			z.coerce
				.date<string | number | Date>({ error: `${field} must be a date and time.` })
				.min(EARLIEST_DATETIME, `${field} must be in the years 1000 to 9999.`)
				.max(LATEST_DATETIME, `${field} must be in the years 1000 to 9999.`)
		)
		.meta({ title: field });

export const PROJECTILE_SHAPES = ['sphere', 'cylinder', 'finned', 'other'] as const;
export const SPEED_REFERENCES = ['muzzle', 'target'] as const;

export const rigInput = z.object({
	name: text('Name', 120),
	reservoirM3: quantity('Reservoir volume', 0, 2, 'm³', true),
	deadM3: quantity('Dead volume', 0, 0.5, 'm³'),
	boreDiameterM: quantity('Bore diameter', 0, 0.5, 'm', true),
	travelM: quantity('Projectile travel', 0, 30, 'm', true),
	ratedPressurePa: quantity('Rated working pressure', 0, 50e6, 'Pa', true),
	valveType: text('Valve type', 80),
	nominalEfficiency: quantity('Nominal efficiency', 0, 1, '', true),
	notes
});
export type RigInput = z.infer<typeof rigInput>;

export const projectileInput = z.object({
	name: text('Name', 120),
	massKg: quantity('Mass', 0, 100, 'kg', true),
	diameterM: quantity('Diameter', 0, 0.5, 'm', true),
	lengthM: quantity('Length', 0, 3, 'm', true),
	shape: z.enum(PROJECTILE_SHAPES, { error: 'Shape must be sphere, cylinder, finned or other.' }),
	nominalDragCoefficient: quantity('Nominal drag coefficient', 0, 3, '', true),
	notes
});
export type ProjectileInput = z.infer<typeof projectileInput>;

export const testPlanInput = z.object({
	name: text('Name', 160),
	speedAt: z.enum(SPEED_REFERENCES, { error: 'Speed reference must be muzzle or target.' }),
	requiredSpeedMps: quantity('Required speed', 0, 1000, 'm/s', true),
	speedTolerancePct: quantity('Speed tolerance', 0, 50, '%', true),
	impactToleranceM: quantity('Impact tolerance radius', 0, 10, 'm', true),
	targetDistanceM: quantity('Target distance', 0, 5000, 'm', true),
	shotsRequired: z
		.number({ error: 'Shots required must be a number.' })
		.int('Shots required must be a whole number.')
		.min(1, 'Shots required must be at least 1.')
		.max(100_000, 'Shots required must be at most 100000.'),
	notes
});
export type TestPlanInput = z.infer<typeof testPlanInput>;

const id = (field: string) =>
	z
		.number({ error: `${field} must be chosen.` })
		.int(`${field} must be chosen.`)
		.positive(`${field} must be chosen.`)
		.meta({ title: `${field} id` });

const sessionShape = z.object({
	title: text('Title', 160),
	rigId: id('Rig'),
	projectileId: id('Projectile'),
	testPlanId: id('Test plan').nullish(),
	startedAt: dateTimeField('Start time'),
	targetDistanceM: quantity('Target distance', 0, 5000, 'm', true),
	elevationDeg: quantity('Elevation', -45, 89, '°'),
	azimuthDeg: quantity('Azimuth', -45, 45, '°').default(0),
	launchHeightM: quantity('Launch height', 0, 100, 'm'),
	aimHeightM: quantity('Aim-point height', 0, 100, 'm'),
	downrangeChronoM: quantity('Downrange chronograph distance', 0, 5000, 'm', true).nullish(),
	temperatureC: quantity('Air temperature', -60, 60, '°C'),
	pressurePa: quantity('Barometric pressure', 50_000, 110_000, 'Pa'),
	relativeHumidity: quantity('Relative humidity', 0, 1, '(fraction)'),
	windXMps: quantity('Wind along the range', -50, 50, 'm/s').default(0),
	windZMps: quantity('Wind across the range', -50, 50, 'm/s').default(0),
	notes
});

export const rangeSessionInput = sessionShape.refine(
	(s) => s.downrangeChronoM == null || s.downrangeChronoM <= s.targetDistanceM,
	{ path: ['downrangeChronoM'], message: 'The downrange chronograph must stand between the muzzle and the target.' }
);
export type RangeSessionInput = z.infer<typeof rangeSessionInput>;

export const shotInput = z.object({
	clientUuid: z.uuid({ error: 'clientUuid must be a UUID made by the client.' }),
	sequence: z
		.number({ error: 'Sequence must be a number.' })
		.int('Sequence must be a whole number.')
		.min(1, 'Sequence must be at least 1.')
		.max(1_000_000, 'Sequence must be at most 1000000.')
		.nullish(),
	firedAt: dateTimeField('Fired-at').nullish(),
	fillGaugePa: quantity('Fill pressure', 0, 50e6, 'Pa'),
	muzzleSpeedMps: quantity('Muzzle speed', 0, 2000, 'm/s', true).nullish(),
	downrangeSpeedMps: quantity('Downrange speed', 0, 2000, 'm/s', true).nullish(),
	impactXM: quantity('Impact x', -20, 20, 'm').nullish(),
	impactYM: quantity('Impact y', -20, 20, 'm').nullish(),
	miss: z.boolean({ error: 'Miss must be true or false.' }).default(false),
	note: z.string().trim().max(1000, 'Note is at most 1000 characters.').nullish(),
	temperatureC: quantity('Shot air temperature', -60, 60, '°C').nullish(),
	pressurePa: quantity('Shot barometric pressure', 50_000, 110_000, 'Pa').nullish(),
	/** The officer confirms a fill pressure above the rig's rated working pressure was really fired so (else it is refused as a typo). */
	aboveRatingConfirmed: z
		.boolean({ error: 'aboveRatingConfirmed must be true or false.' })
		.optional()
		.meta({ description: 'true: the fill pressure is above the rig’s rated working pressure and was really fired so (kept as a safety event). Without it such a shot is refused (422).' })
});
export type ShotInput = z.infer<typeof shotInput>;

/**
 * A partial change of a shot. The miss flag loses its default here: a change that does not
 * mention it must leave it as it is, not reset it to false. Sequence and fired-at may be left
 * out but not emptied: a stored shot always has both (null there is a 400, not a NOT NULL error).
 */
export const shotUpdate = shotInput
	.omit({ clientUuid: true })
	.extend({
		miss: z.boolean({ error: 'Miss must be true or false.' }),
		sequence: shotInput.shape.sequence.unwrap().unwrap(),
		firedAt: dateTimeField('Fired-at')
	})
	.partial();
export type ShotUpdate = z.infer<typeof shotUpdate>;

/** Voiding a shot at the firing line: the reason is kept with it. */
export const shotVoid = z.object({
	reason: z.string({ error: 'Give a reason for voiding the shot.' }).trim().min(1, 'Give a reason for voiding the shot.').max(500, 'The reason is at most 500 characters.')
});
export type ShotVoid = z.infer<typeof shotVoid>;

/** zod issues as {path, message} pairs for API error bodies. */
export function issuesOf(error: z.ZodError) {
	return error.issues.map((i) => ({ path: i.path.join('.') || '(body)', message: i.message }));
}
