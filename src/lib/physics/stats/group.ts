// Statistics of a group of impacts on the target face, per design/physics.md §6 and
// reference-sheet.md §6 (formulas and the worked 10-shot group used in group.spec.ts).
// Coordinates are offsets from the aim point, x to the right and y up (design/product.md), in one
// consistent length unit (metres in the app, mm in the worked example); lengths come back in it.
//
// Every dispersion figure is taken about the SAMPLE centre, so estimators of σ use n − 1.

import {
	RAYLEIGH_CEP_PER_SIGMA,
	RAYLEIGH_R95_PER_SIGMA,
	circleRadiusForProbability
} from './cep';
import { requireFinite, requireInRange, requirePositive } from '../errors';

export interface ImpactPoint {
	x: number;
	y: number;
}

/** Symmetric 2×2 matrix [[sxx, sxy], [sxy, syy]]. */
export type Covariance2 = [[number, number], [number, number]];

export interface CovarianceEllipse {
	centre: ImpactPoint;
	semiMajor: number;
	semiMinor: number;
	/** Direction of the major axis, radians counter-clockwise from +x, in (−π/2, π/2]. */
	angle: number;
	/** Scale applied to √λ of the covariance matrix to get the semi-axes. */
	k: number;
	/** Nominal probability the ellipse is built for (0.95). */
	level: number;
}

/** An ellipse, or null with the reason it cannot be formed from these shots. */
export type EllipseEstimate =
	| { ellipse: CovarianceEllipse; reason: null }
	| { ellipse: null; reason: string };

export interface GroupStats {
	n: number;
	/** Mean point of impact; null when n = 0. */
	centre: ImpactPoint | null;
	/** Sample SDs along x and y (n − 1); null when n < 2. */
	sdX: number | null;
	sdY: number | null;
	/** Largest centre-to-centre distance between two impacts; 0 for one shot, null when n = 0. */
	extremeSpread: number | null;
	/** Mean distance of the impacts from the sample centre; 0 for one shot, null when n = 0. */
	meanRadius: number | null;
	/** Sample covariance matrix (n − 1); null when n < 2. */
	covariance: Covariance2 | null;
	/** Circular σ estimated about the sample centre, √(Σ r_i² / (2(n − 1))); null when n < 2. */
	sigmaHat: number | null;
	/** Rayleigh (circular-normal) CEP estimate σ̂·√(2 ln 2). */
	cepRayleigh: number | null;
	/** Rayleigh 95 % radius σ̂·√(−2 ln 0.05). */
	r95Rayleigh: number | null;
	/** Exact CEP of a centred normal with the covariance's principal SDs √λ1, √λ2 (plug-in). */
	cepExact: number | null;
	/** Exact 95 % radius for the same principal SDs. */
	r95Exact: number | null;
	/** 95 % ellipse of the covariance taken as known: k = √χ²₂(0.95). Needs n ≥ 2. */
	covarianceEllipse95: EllipseEstimate;
	/** 95 % prediction ellipse for the next shot (Hotelling); needs n ≥ 3. */
	predictionEllipse95: EllipseEstimate;
	/** 95 % confidence ellipse for the true mean point of impact (Hotelling); needs n ≥ 3. */
	meanConfidenceEllipse95: EllipseEstimate;
}

/** The ellipses of the design are 95 % ones (design/physics.md §6). */
const ELLIPSE_LEVEL = 0.95;

function assertLevel(level: number): void {
	requireInRange(level, 'level', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
}

/**
 * Scale k of the ellipse holding probability `level` when the covariance is known:
 * k = √χ²₂(level) = √(−2 ln(1 − level)) (the χ² with 2 dof is exponential; reference §6:
 * k50 = 1.177 410, k95 = 2.447 747).
 */
export function knownCovarianceEllipseScale(level: number): number {
	assertLevel(level);
	return Math.sqrt(-2 * Math.log1p(-level));
}

/**
 * Quantile F(p; 2, m) of the F distribution with 2 numerator and m denominator degrees of freedom,
 * in closed form: F = (m/2)·((1 − p)^(−2/m) − 1). Derivation: the F CDF is I_z(d1/2, d2/2) with
 * z = d1·F/(d1·F + d2), and I_z(1, b) = 1 − (1 − z)^b, so P(F ≤ f) = 1 − (1 + 2f/m)^(−m/2); solving
 * for f gives the formula. Written with expm1/log1p to keep precision for large m.
 * Check: F(0.95; 2, 8) = 4.45897 (reference §6).
 */
export function fQuantileTwoNumeratorDof(p: number, denominatorDof: number): number {
	requireInRange(p, 'p', { min: 0, max: 1, maxExclusive: true });
	requirePositive(denominatorDof, 'denominatorDof');
	return (denominatorDof / 2) * Math.expm1((-2 / denominatorDof) * Math.log1p(-p));
}

/**
 * Hotelling prediction-ellipse scale for a NEW shot from n shots (covariance estimated):
 * k² = 2(n − 1)(n + 1)/(n(n − 2))·F(p; 2, n − 2) (Johnson & Wichern, *Applied Multivariate
 * Statistical Analysis*, prediction ellipse [memory]; reference §6: n = 10 → k = 3.32204).
 * Null when n < 3 (F needs n − 2 > 0 dof).
 */
export function predictionEllipseScale(n: number, level: number): number | null {
	assertLevel(level);
	if (!Number.isInteger(n) || n < 3) return null;
	const f = fQuantileTwoNumeratorDof(level, n - 2);
	return Math.sqrt(((2 * (n - 1) * (n + 1)) / (n * (n - 2))) * f);
}

/**
 * Hotelling T² confidence-ellipse scale for the MEAN point of impact from n shots:
 * k² = 2(n − 1)/(n(n − 2))·F(p; 2, n − 2) (same source; reference §6: n = 10 → k = 1.00163).
 * Null when n < 3.
 */
export function meanConfidenceEllipseScale(n: number, level: number): number | null {
	assertLevel(level);
	if (!Number.isInteger(n) || n < 3) return null;
	const f = fQuantileTwoNumeratorDof(level, n - 2);
	return Math.sqrt(((2 * (n - 1)) / (n * (n - 2))) * f);
}

/**
 * Eigen-decomposition of a symmetric 2×2 matrix in closed form: λ = m ± √(((a − c)/2)² + b²),
 * major-axis angle ½·atan2(2b, a − c). λ2 is clamped at 0 (collinear shots give a singular S whose
 * small eigenvalue can come out as −1e-17 by rounding).
 */
export function principalAxes(covariance: Covariance2): {
	lambdaMajor: number;
	lambdaMinor: number;
	angle: number;
} {
	const [[a, b], [, c]] = covariance;
	const middle = (a + c) / 2;
	const radius = Math.hypot((a - c) / 2, b);
	const angle = 0.5 * Math.atan2(2 * b, a - c);
	return {
		lambdaMajor: middle + radius,
		lambdaMinor: Math.max(0, middle - radius),
		// atan2(−0, negative) = −π would give −π/2: fold it onto the same axis at +π/2.
		angle: angle <= -Math.PI / 2 ? angle + Math.PI : angle
	};
}

/** Ellipse with semi-axes k·√λ_i along the principal axes of `covariance`, centred on `centre`. */
export function covarianceEllipse(
	covariance: Covariance2,
	centre: ImpactPoint,
	k: number,
	level: number
): CovarianceEllipse {
	const { lambdaMajor, lambdaMinor, angle } = principalAxes(covariance);
	return {
		centre: { ...centre },
		semiMajor: k * Math.sqrt(lambdaMajor),
		semiMinor: k * Math.sqrt(lambdaMinor),
		angle,
		k,
		level
	};
}

/** z of (a − o) × (b − o): > 0 when o → a → b turns counter-clockwise. */
function cross(o: ImpactPoint, a: ImpactPoint, b: ImpactPoint): number {
	return (a.x - o.x) * (b.y - o.y) - (a.y - o.y) * (b.x - o.x);
}

/**
 * Vertices of the convex hull (Andrew's monotone chain, A.M. Andrew, Inf. Process. Lett. 9 (1979)
 * 216 [memory]), O(n log n). Collinear and repeated points are dropped; fewer than 3 points
 * come back as given.
 */
function convexHull(points: readonly ImpactPoint[]): ImpactPoint[] {
	if (points.length < 3) return points.slice();
	const sorted = points.slice().sort((a, b) => a.x - b.x || a.y - b.y);
	const chain = (ordered: ImpactPoint[]) => {
		const out: ImpactPoint[] = [];
		for (const p of ordered) {
			while (out.length >= 2 && cross(out[out.length - 2], out[out.length - 1], p) <= 0) out.pop();
			out.push(p);
		}
		out.pop();
		return out;
	};
	return chain(sorted).concat(chain(sorted.slice().reverse()));
}

/**
 * Largest pairwise distance. The farthest pair of a point set are both hull vertices, so only the
 * hull's few vertices are compared pairwise: a session imported with 100 000 impacts takes
 * milliseconds instead of the minutes all pairs would.
 */
function maxPairwiseDistance(points: readonly ImpactPoint[]): number {
	const hull = convexHull(points);
	let largest = 0;
	for (let i = 0; i < hull.length; i++) {
		for (let j = i + 1; j < hull.length; j++) {
			largest = Math.max(largest, Math.hypot(hull[i].x - hull[j].x, hull[i].y - hull[j].y));
		}
	}
	return largest;
}

function unavailable(reason: string): EllipseEstimate {
	return { ellipse: null, reason };
}

/**
 * Group statistics (reference §6). A non-finite coordinate throws PhysicsInputError (naming
 * `points[i].x`) rather than turning every figure into NaN.
 */
export function groupStats(points: readonly ImpactPoint[]): GroupStats {
	points.forEach((p, i) => {
		requireFinite(p.x, `points[${i}].x`);
		requireFinite(p.y, `points[${i}].y`);
	});
	const n = points.length;
	const noCovariance = {
		sdX: null,
		sdY: null,
		covariance: null,
		sigmaHat: null,
		cepRayleigh: null,
		r95Rayleigh: null,
		cepExact: null,
		r95Exact: null,
		covarianceEllipse95: unavailable('needs at least 2 shots to estimate a covariance'),
		predictionEllipse95: unavailable('needs at least 3 shots (F distribution with n − 2 dof)'),
		meanConfidenceEllipse95: unavailable('needs at least 3 shots (F distribution with n − 2 dof)')
	};
	if (n === 0) {
		return { n, centre: null, extremeSpread: null, meanRadius: null, ...noCovariance };
	}

	let sumX = 0;
	let sumY = 0;
	for (const p of points) {
		sumX += p.x;
		sumY += p.y;
	}
	const centre = { x: sumX / n, y: sumY / n };

	// Second pass about the centre (numerically safer than raw sums of squares).
	let sxx = 0;
	let syy = 0;
	let sxy = 0;
	let radiusSum = 0;
	for (const p of points) {
		const dx = p.x - centre.x;
		const dy = p.y - centre.y;
		sxx += dx * dx;
		syy += dy * dy;
		sxy += dx * dy;
		radiusSum += Math.hypot(dx, dy);
	}
	const extremeSpread = maxPairwiseDistance(points);
	const meanRadius = radiusSum / n;
	if (n < 2) return { n, centre, extremeSpread, meanRadius, ...noCovariance };

	const dof = n - 1;
	const covariance: Covariance2 = [
		[sxx / dof, sxy / dof],
		[sxy / dof, syy / dof]
	];
	// E[Σ r_i²] = 2(n − 1)σ² about the sample centre (reference §6).
	const sigmaHat = Math.sqrt((sxx + syy) / (2 * dof));
	const { lambdaMajor, lambdaMinor } = principalAxes(covariance);
	// The radius distribution of a centred normal depends only on its principal SDs (rotation).
	const sigmaMajor = Math.sqrt(lambdaMajor);
	const sigmaMinor = Math.sqrt(lambdaMinor);

	const knownK = knownCovarianceEllipseScale(ELLIPSE_LEVEL);
	const predictionK = predictionEllipseScale(n, ELLIPSE_LEVEL);
	const meanK = meanConfidenceEllipseScale(n, ELLIPSE_LEVEL);
	const ellipseOrReason = (k: number | null): EllipseEstimate =>
		k === null
			? unavailable('needs at least 3 shots (F distribution with n − 2 dof)')
			: { ellipse: covarianceEllipse(covariance, centre, k, ELLIPSE_LEVEL), reason: null };

	return {
		n,
		centre,
		sdX: Math.sqrt(covariance[0][0]),
		sdY: Math.sqrt(covariance[1][1]),
		extremeSpread,
		meanRadius,
		covariance,
		sigmaHat,
		cepRayleigh: RAYLEIGH_CEP_PER_SIGMA * sigmaHat,
		r95Rayleigh: RAYLEIGH_R95_PER_SIGMA * sigmaHat,
		cepExact: circleRadiusForProbability(sigmaMajor, sigmaMinor, 0.5),
		r95Exact: circleRadiusForProbability(sigmaMajor, sigmaMinor, ELLIPSE_LEVEL),
		covarianceEllipse95: {
			ellipse: covarianceEllipse(covariance, centre, knownK, ELLIPSE_LEVEL),
			reason: null
		},
		predictionEllipse95: ellipseOrReason(predictionK),
		meanConfidenceEllipse95: ellipseOrReason(meanK)
	};
}
