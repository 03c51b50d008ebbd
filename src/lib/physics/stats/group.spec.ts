import { sampleCovariance, sampleStandardDeviation } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from '../errors';
import { RAYLEIGH_CEP_PER_SIGMA } from './cep';
import {
	fQuantileTwoNumeratorDof,
	groupStats,
	knownCovarianceEllipseScale,
	meanConfidenceEllipseScale,
	predictionEllipseScale,
	principalAxes,
	type ImpactPoint
} from './group';

// reference-sheet.md §6 "Worked group [computed], mm" (checks.py → checks_output.json key
// 6.group_example; the Hotelling scales are printed by checks.py section 6b).
const WORKED_GROUP: ImpactPoint[] = [
	[12, -3],
	[-4, 8],
	[6, 2],
	[-9, -6],
	[3, 11],
	[0, -7],
	[7, -1],
	[-5, 4],
	[10, 5],
	[-2, -9]
].map(([x, y]) => ({ x, y }));

/** |actual − expected| ≤ half a unit in the last quoted decimal. */
function expectRounded(actual: number | null | undefined, expected: number, decimals: number): void {
	expect(actual).not.toBeNull();
	expect(Math.abs((actual as number) - expected)).toBeLessThanOrEqual(0.5 * 10 ** -decimals + 1e-12);
}

describe('groupStats — reference §6 worked 10-shot group (mm)', () => {
	const g = groupStats(WORKED_GROUP);

	it('centre (1.8, 0.4), SD_x 6.9250, SD_y 6.7032', () => {
		expect(g.n).toBe(10);
		expect(g.centre?.x).toBeCloseTo(1.8, 12);
		expect(g.centre?.y).toBeCloseTo(0.4, 12);
		expectRounded(g.sdX, 6.925, 4);
		expectRounded(g.sdY, 6.7032, 4);
	});

	it('ES 21.9545, MR 8.8264, σ̂ 6.8150', () => {
		expectRounded(g.extremeSpread, 21.9545, 4);
		expectRounded(g.meanRadius, 8.8264, 4);
		expectRounded(g.sigmaHat, 6.815, 4);
	});

	it('CEP (Rayleigh) 8.0241, R95 16.6815', () => {
		expectRounded(g.cepRayleigh, 8.0241, 4);
		// checks.py multiplies σ̂ by the rounded 2.44775 (→ 16.68151); the exact √(−2 ln 0.05) gives
		// 16.68143, so the last digit of the reference differs by rounding of the constant only.
		expect(Math.abs((g.r95Rayleigh as number) - 16.6815)).toBeLessThan(1e-4);
	});

	it('S = [[47.9556, 7.2], [7.2, 44.9333]]', () => {
		const s = g.covariance!;
		expectRounded(s[0][0], 47.9556, 4);
		expectRounded(s[0][1], 7.2, 4);
		expectRounded(s[1][0], 7.2, 4);
		expectRounded(s[1][1], 44.9333, 4);
	});

	it('χ² 95 % ellipse semi-axes 17.9541, 15.3033', () => {
		const e = g.covarianceEllipse95.ellipse!;
		expectRounded(e.semiMajor, 17.9541, 4);
		expectRounded(e.semiMinor, 15.3033, 4);
		expectRounded(e.k, 2.447747, 6);
		// Major axis at ½·atan2(2·7.2, 47.9556 − 44.9333) = 39.0735° (numpy, computed for this test).
		expect((e.angle * 180) / Math.PI).toBeCloseTo(39.07349791597979, 8);
		expect(e.centre).toEqual(g.centre);
	});

	it('n = 10 prediction ellipse k 3.32204 and mean-confidence k 1.00163 (Hotelling)', () => {
		const prediction = g.predictionEllipse95.ellipse!;
		const meanEllipse = g.meanConfidenceEllipse95.ellipse!;
		expectRounded(prediction.k, 3.32204, 5);
		expectRounded(meanEllipse.k, 1.00163, 5);
		// Same axes as the χ² ellipse, rescaled: 3.3220401888·√λ (scipy, computed for this test).
		expect(prediction.semiMajor).toBeCloseTo(24.366957365525508, 8);
		expect(prediction.semiMinor).toBeCloseTo(20.76941540984115, 8);
		expect(meanEllipse.semiMajor).toBeCloseTo(7.346914078548638, 8);
		expect(g.predictionEllipse95.reason).toBeNull();
	});

	it('exact CEP 7.99097 and exact R95 16.73450 from the eigenvalues (checks.py p_in_circle + brentq, computed for this test)', () => {
		expect(g.cepExact).toBeCloseTo(7.9909665737, 8);
		expect(g.r95Exact).toBeCloseTo(16.7344966566, 8);
	});

	it('agrees with simple-statistics on SDs and covariance', () => {
		const xs = WORKED_GROUP.map((p) => p.x);
		const ys = WORKED_GROUP.map((p) => p.y);
		expect(g.sdX).toBeCloseTo(sampleStandardDeviation(xs), 12);
		expect(g.sdY).toBeCloseTo(sampleStandardDeviation(ys), 12);
		expect(g.covariance![0][1]).toBeCloseTo(sampleCovariance(xs, ys), 12);
	});
});

describe('ellipse scales', () => {
	it('k50 = 1.177410 and k95 = 2.447747 (reference §6)', () => {
		expectRounded(knownCovarianceEllipseScale(0.5), 1.17741, 6);
		expectRounded(knownCovarianceEllipseScale(0.95), 2.447747, 6);
	});

	it('closed-form F(0.95; 2, 8) = 4.45897 (reference §6)', () => {
		expectRounded(fQuantileTwoNumeratorDof(0.95, 8), 4.45897, 5);
	});

	it('F(0.95; 2, m) and prediction k for n = 3, 4, 5, 30 match scipy.stats.f.ppf (computed for this test)', () => {
		const cases = [
			{ n: 3, f: 199.5, k: 32.61901286 },
			{ n: 4, f: 19, k: 8.440971508 },
			{ n: 5, f: 9.552094496, k: 5.528716161 },
			{ n: 30, f: 3.340385558, k: 2.673951337 }
		];
		for (const { n, f, k } of cases) {
			expect(fQuantileTwoNumeratorDof(0.95, n - 2)).toBeCloseTo(f, 8);
			expect(predictionEllipseScale(n, 0.95)).toBeCloseTo(k, 8);
		}
	});

	it('prediction k tends to the known-covariance k95 and the mean k to 0 as n grows', () => {
		// k ≈ k95·(1 + 2.5/n) for large n, so n = 10⁹ agrees to ~6 decimals.
		expect(predictionEllipseScale(1e9, 0.95)).toBeCloseTo(knownCovarianceEllipseScale(0.95), 6);
		expect(meanConfidenceEllipseScale(1e9, 0.95)).toBeLessThan(1e-4);
	});

	it('is null below 3 shots', () => {
		expect(predictionEllipseScale(2, 0.95)).toBeNull();
		expect(meanConfidenceEllipseScale(2, 0.95)).toBeNull();
	});
});

describe('principalAxes', () => {
	it('puts the major axis along y when σy > σx', () => {
		const axes = principalAxes([
			[1, 0],
			[0, 4]
		]);
		expect(axes).toEqual({ lambdaMajor: 4, lambdaMinor: 1, angle: Math.PI / 2 });
		expect(
			principalAxes([
				[1, -0],
				[-0, 4]
			]).angle
		).toBe(Math.PI / 2);
	});

	it('recovers a rotated covariance R·diag(9, 1)·Rᵀ at 30°', () => {
		const a = Math.PI / 6;
		const c = Math.cos(a);
		const s = Math.sin(a);
		const axes = principalAxes([
			[9 * c * c + s * s, 8 * c * s],
			[8 * c * s, 9 * s * s + c * c]
		]);
		expect(axes.lambdaMajor).toBeCloseTo(9, 12);
		expect(axes.lambdaMinor).toBeCloseTo(1, 12);
		expect(axes.angle).toBeCloseTo(a, 12);
	});
});

describe('groupStats — small and degenerate groups', () => {
	it('returns typed nulls for no shots', () => {
		const g = groupStats([]);
		expect(g.centre).toBeNull();
		expect(g.extremeSpread).toBeNull();
		expect(g.meanRadius).toBeNull();
		expect(g.sigmaHat).toBeNull();
		expect(g.covarianceEllipse95).toEqual({ ellipse: null, reason: expect.any(String) });
	});

	it('one shot: centre, zero spread and radius, no σ', () => {
		const g = groupStats([{ x: 3, y: -2 }]);
		expect(g.centre).toEqual({ x: 3, y: -2 });
		expect(g.extremeSpread).toBe(0);
		expect(g.meanRadius).toBe(0);
		expect(g.sdX).toBeNull();
		expect(g.cepExact).toBeNull();
		expect(g.predictionEllipse95.ellipse).toBeNull();
	});

	it('two shots: covariance ellipse (degenerate), no Hotelling ellipses, with a reason', () => {
		const g = groupStats([
			{ x: 0, y: 0 },
			{ x: 4, y: 3 }
		]);
		expect(g.extremeSpread).toBe(5);
		expect(g.meanRadius).toBe(2.5);
		expect(g.covarianceEllipse95.ellipse?.semiMinor).toBeCloseTo(0, 12);
		expect(g.covarianceEllipse95.ellipse?.angle).toBeCloseTo(Math.atan2(3, 4), 12);
		expect(g.predictionEllipse95.ellipse).toBeNull();
		expect(g.predictionEllipse95.reason).toMatch(/3 shots/);
		expect(g.meanConfidenceEllipse95.reason).toMatch(/3 shots/);
		// A line dispersion: exact CEP is the median of |X| along it, 0.6745·σ.
		expect(g.cepExact).toBeCloseTo(0.6744897502 * Math.sqrt(g.covariance![0][0] + g.covariance![1][1]), 8);
	});

	it('identical shots give zeros, not NaN', () => {
		const g = groupStats([
			{ x: 1, y: 1 },
			{ x: 1, y: 1 },
			{ x: 1, y: 1 }
		]);
		expect(g.sigmaHat).toBe(0);
		expect(g.cepExact).toBe(0);
		expect(g.predictionEllipse95.ellipse?.semiMajor).toBe(0);
	});

	it('an isotropic group has exact CEP = Rayleigh CEP', () => {
		const g = groupStats([
			{ x: 1, y: 0 },
			{ x: 0, y: 1 },
			{ x: -1, y: 0 },
			{ x: 0, y: -1 }
		]);
		expect(g.cepExact).toBeCloseTo(RAYLEIGH_CEP_PER_SIGMA * g.sigmaHat!, 13);
	});

	it('rejects non-finite coordinates', () => {
		expect(() => groupStats([{ x: 0, y: Number.NaN }])).toThrow(PhysicsInputError);
	});
});

describe('groupStats — extreme spread through the convex hull', () => {
	const allPairs = (points: ImpactPoint[]) => {
		let largest = 0;
		for (let i = 0; i < points.length; i++)
			for (let j = i + 1; j < points.length; j++)
				largest = Math.max(largest, Math.hypot(points[i].x - points[j].x, points[i].y - points[j].y));
		return largest;
	};
	// Deterministic pseudo-random points (a linear congruential sequence; any spread of points will do).
	let state = 12345;
	const next = () => (state = (state * 1103515245 + 12345) % 2147483648) / 2147483648;

	it('equals the all-pairs maximum on scattered, collinear, repeated and circular sets', () => {
		const sets: ImpactPoint[][] = [
			Array.from({ length: 200 }, () => ({ x: next() - 0.5, y: next() - 0.5 })),
			Array.from({ length: 50 }, () => {
				const s = next();
				return { x: s, y: 2 * s - 1 };
			}),
			Array.from({ length: 40 }, () => ({ x: Math.floor(3 * next()), y: Math.floor(3 * next()) })),
			Array.from({ length: 64 }, (_, i) => ({ x: Math.cos((i * Math.PI) / 32), y: Math.sin((i * Math.PI) / 32) }))
		];
		for (const points of sets) expect(groupStats(points).extremeSpread).toBe(allPairs(points));
	});

	it('handles 100 000 impacts (an imported session) in seconds, not the minutes all pairs take', () => {
		const points = Array.from({ length: 100_000 }, () => ({ x: next(), y: next() }));
		const started = performance.now();
		groupStats(points);
		expect(performance.now() - started).toBeLessThan(5000);
	});
});
