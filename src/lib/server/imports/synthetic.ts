// Chronograph files made from the model, for the tests and the import benchmark: fill
// pressures around a few set points, muzzle speeds from the energy balance (physics.md §1) with a
// "true" efficiency and seeded noise, downrange speeds from the drag decay v(x) = v0·exp(−kx),
// k = ρ C_D A / (2m) (level flight; close enough at chronograph distances), impacts scattered
// around the aim point. Written in any of our units and CSV conventions.
import { airDensity } from '$lib/physics/air';
import { muzzleSpeed } from '$lib/physics/internal';
import { createRandom } from '$lib/physics/random';
import { fromSI, unitsOf, type UnitOf } from '$lib/physics/units';

export type SyntheticSetup = {
	rig: { reservoirM3: number; deadM3: number; boreDiameterM: number; travelM: number };
	projectile: { massKg: number; diameterM: number; dragCoefficient: number };
	conditions: { temperatureC: number; pressurePa: number; relativeHumidity: number };
	downrangeM: number;
	/** The rig's real efficiency (the app knows only the nominal one). */
	efficiency: number;
	setPointsPa: number[];
};

export type SyntheticOptions = {
	rows: number;
	seed?: number;
	startMs?: number;
	units?: { pressure?: UnitOf['pressure']; speed?: UnitOf['speed']; length?: UnitOf['length'] };
	delimiter?: ',' | ';' | '\t';
	decimal?: '.' | ',';
	newline?: '\n' | '\r\n';
	/** Header names: ours (the blank template's, with the units) or a chronograph's. */
	headers?: 'ours' | 'chronograph';
	/** Every nth shot is a miss (no offsets). */
	missEvery?: number;
};

const symbol = (quantity: 'pressure' | 'speed' | 'length', unit: string) => unitsOf(quantity).find((u) => u.id === unit)!.symbol;
const suffix = (unit: string) => unit.toLowerCase().replace('/', '_per_');

export function syntheticShots(setup: SyntheticSetup, options: SyntheticOptions): string {
	const random = createRandom(options.seed ?? 7);
	const units = { pressure: 'bar', speed: 'm/s', length: 'mm', ...options.units } as const;
	const delimiter = options.delimiter ?? ',';
	const decimal = options.decimal ?? '.';
	const newline = options.newline ?? '\n';
	const start = options.startMs ?? Date.UTC(2026, 10, 2, 8, 0, 0);
	const rho = airDensity(setup.conditions);
	const areaM2 = (Math.PI * setup.projectile.diameterM ** 2) / 4;
	const k = (rho * setup.projectile.dragCoefficient * areaM2) / (2 * setup.projectile.massKg);
	const header =
		options.headers === 'chronograph'
			? ['Shot', 'Time', `Pressure (${symbol('pressure', units.pressure)})`, `V0 (${symbol('speed', units.speed)})`, `V2 (${symbol('speed', units.speed)})`, `X (${units.length})`, `Y (${units.length})`, 'Miss', 'Comment']
			: ['sequence', 'fired_at_utc', `fill_pressure_${suffix(units.pressure)}`, `muzzle_speed_${suffix(units.speed)}`, `downrange_speed_${suffix(units.speed)}`, `impact_x_${units.length}`, `impact_y_${units.length}`, 'miss', 'note'];
	const number = (value: number, digits: number) => {
		const text = value.toFixed(digits);
		return decimal === ',' ? text.replace('.', ',') : text;
	};
	const lines = [header.join(delimiter)];
	for (let i = 0; i < options.rows; i++) {
		const fillPa = setup.setPointsPa[i % setup.setPointsPa.length] + random.normal(0, 500);
		const result = muzzleSpeed({
			fillGaugePa: fillPa,
			ambientPa: setup.conditions.pressurePa,
			...setup.rig,
			massKg: setup.projectile.massKg,
			efficiency: setup.efficiency
		});
		const v0 = (result.ok ? result.speedMps : 1) * (1 + random.normal(0, 0.004));
		const v2 = v0 * Math.exp(-k * setup.downrangeM) + random.normal(0, 0.05);
		const miss = options.missEvery ? i % options.missEvery === options.missEvery - 1 : false;
		const x = random.normal(0, 0.008);
		const y = random.normal(0, 0.008);
		const lengthDigits = units.length === 'mm' ? 1 : 4;
		lines.push(
			[
				String(i + 1),
				new Date(start + i * 20_000).toISOString().replace('.000Z', 'Z'),
				number(fromSI('pressure', units.pressure, fillPa), units.pressure === 'Pa' ? 0 : 4),
				number(fromSI('speed', units.speed, v0), 3),
				number(fromSI('speed', units.speed, v2), 3),
				miss ? '' : number(fromSI('length', units.length, x), lengthDigits),
				miss ? '' : number(fromSI('length', units.length, y), lengthDigits),
				miss ? 'yes' : 'no',
				i % 50 === 0 ? `"set point ${i % setup.setPointsPa.length + 1}, gusty"` : ''
			].join(delimiter)
		);
	}
	return lines.join(newline) + newline;
}
