// Seeded pseudo-random numbers for reproducible Monte Carlo and demo data. Math.random cannot be
// seeded, and the generator needed here is a dozen lines, so it is written out rather than taken
// as a dependency: the same seed must give the same numbers in the server, the browser and CI.
//
// Generator: sfc32 ("small fast chaotic", C. Doty-Humphrey, part of the PractRand suite; passes
// PractRand and TestU01 BigCrush per its author, from memory). 128-bit state, 32-bit outputs; the
// state is filled from the seed by splitmix32 (a 32-bit variant of Steele, Lea & Flood,
// "Fast splittable pseudorandom number generators", OOPSLA 2014), so nearby seeds give unrelated
// streams. Normal deviates: Marsaglia's polar method (Marsaglia & Bray, SIAM Review 6 (1964) 260),
// which needs no trigonometry and keeps the second deviate of each pair.

import { PhysicsInputError, requireFinite, requireInRange, requireNonNegative } from './errors';

/** Outputs discarded after seeding so the state is well mixed (sfc32 reference practice). */
const WARM_UP_ROUNDS = 12;
const TWO_POW_32 = 4294967296;

export interface Random {
	/** Uniform in [0, 1), 32 bits of resolution. */
	next(): number;
	/** Normal deviate with the given mean and standard deviation. */
	normal(mean?: number, sd?: number): number;
	/** Uniform integer in [0, maxExclusive); maxExclusive is an integer in [1, 2³²]. */
	integer(maxExclusive: number): number;
}

function splitmix32(seed: number): () => number {
	let state = seed >>> 0;
	return () => {
		state = (state + 0x9e3779b9) >>> 0;
		let z = state;
		z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
		z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
		return (z ^ (z >>> 16)) >>> 0;
	};
}

/**
 * A generator seeded with `seed` (any finite number; its integer part modulo 2³² is used, so
 * seeds 1 and 2³² + 1 give the same stream).
 */
export function createRandom(seed: number): Random {
	requireFinite(seed, 'seed');
	const fill = splitmix32(Math.trunc(seed) % TWO_POW_32);
	let a = fill();
	let b = fill();
	let c = fill();
	let d = fill();

	function nextUint32(): number {
		const t = (((a + b) >>> 0) + d) >>> 0;
		d = (d + 1) >>> 0;
		a = b ^ (b >>> 9);
		b = (c + (c << 3)) >>> 0;
		c = (c << 21) | (c >>> 11);
		c = (c + t) >>> 0;
		return t;
	}
	for (let i = 0; i < WARM_UP_ROUNDS; i++) nextUint32();

	let spare = 0;
	let hasSpare = false;

	const next = () => nextUint32() / TWO_POW_32;

	function standardNormal(): number {
		if (hasSpare) {
			hasSpare = false;
			return spare;
		}
		let u: number;
		let v: number;
		let s: number;
		do {
			u = 2 * next() - 1;
			v = 2 * next() - 1;
			s = u * u + v * v;
		} while (s >= 1 || s === 0);
		const factor = Math.sqrt((-2 * Math.log(s)) / s);
		spare = v * factor;
		hasSpare = true;
		return u * factor;
	}

	return {
		next,
		normal(mean = 0, sd = 1) {
			requireFinite(mean, 'mean');
			requireNonNegative(sd, 'sd');
			return mean + sd * standardNormal();
		},
		integer(maxExclusive: number) {
			requireInRange(maxExclusive, 'maxExclusive', { min: 1, max: TWO_POW_32 });
			if (!Number.isInteger(maxExclusive)) {
				throw new PhysicsInputError('maxExclusive', 'out-of-range', `maxExclusive must be an integer (got ${maxExclusive})`);
			}
			return Math.floor(next() * maxExclusive);
		}
	};
}
