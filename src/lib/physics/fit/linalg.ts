// Small dense linear algebra for the least-squares engine.
//
// Why our own code: the matrices here are tiny (a handful of parameters, at most a few tens of
// thousands of residual rows), and what the fits need is specific: a column-pivoted Householder
// QR in the layout Moré's Levenberg–Marquardt expects, an accurate SVD of a column-scaled
// Jacobian to decide rank, and a Cholesky that tolerates a semidefinite covariance. No installed
// package provides these (simple-statistics has no matrix factorisations), and pulling in a
// general matrix library for ~300 lines of well-known algorithms would add weight to the
// browser bundle without removing the need for the LM-specific pieces.
//
// Storage: dense matrices that the LM core factorises are Float64Array in COLUMN-MAJOR order
// (element (i, j) of an m×n matrix at index i + j·m), as in MINPACK, because every hot loop
// runs down a column. Plain number[][] (row-major) is used at the public edges.

export const MACHINE_EPSILON = 2.220446049250313e-16;

const RDWARF = 3.834e-20;
const RGIANT = 1.304e19;

/**
 * Euclidean norm of x[start..end), guarded against overflow and underflow of the squares.
 * Source: the scaling idea of MINPACK `enorm` (Moré, Garbow & Hillstrom, MINPACK-1, ANL-80-74, 1980).
 */
export function euclideanNorm(x: ArrayLike<number>, start = 0, end = x.length): number {
	let plain = 0;
	let safe = true;
	for (let i = start; i < end; i++) {
		const a = Math.abs(x[i]);
		if (a > RDWARF && a < RGIANT) plain += a * a;
		else if (a !== 0) safe = false;
	}
	if (safe) return Math.sqrt(plain);
	let scale = 0;
	for (let i = start; i < end; i++) scale = Math.max(scale, Math.abs(x[i]));
	if (scale === 0 || !Number.isFinite(scale)) return scale;
	let sum = 0;
	for (let i = start; i < end; i++) {
		const t = x[i] / scale;
		sum += t * t;
	}
	return scale * Math.sqrt(sum);
}

/** Result of {@link qrFactorPivoted}; the factored matrix itself is overwritten in place. */
export interface PivotedQr {
	/** Column permutation: column j of A·P is column `pivot[j]` of A. */
	pivot: Int32Array;
	/** Diagonal of R. */
	rDiagonal: Float64Array;
	/** Euclidean norms of the columns of the original A. */
	columnNorms: Float64Array;
}

/**
 * Householder QR with column pivoting, A·P = Q·R, in place on the column-major m×n matrix `a`
 * (m ≥ n). On return the strict upper triangle of `a` holds R (its diagonal is in `rDiagonal`),
 * and column j from row j down holds the Householder vector u_j (Q = ∏ (I − u_j u_jᵀ / u_j[j])).
 * Algorithm and norm down-dating: MINPACK `qrfac` (Moré, Garbow & Hillstrom, ANL-80-74, 1980).
 */
export function qrFactorPivoted(a: Float64Array, m: number, n: number): PivotedQr {
	const pivot = new Int32Array(n);
	const rDiagonal = new Float64Array(n);
	const columnNorms = new Float64Array(n);
	const work = new Float64Array(n);
	for (let j = 0; j < n; j++) {
		columnNorms[j] = euclideanNorm(a, j * m, j * m + m);
		rDiagonal[j] = columnNorms[j];
		work[j] = rDiagonal[j];
		pivot[j] = j;
	}
	const minmn = Math.min(m, n);
	for (let j = 0; j < minmn; j++) {
		let kmax = j;
		for (let k = j; k < n; k++) if (rDiagonal[k] > rDiagonal[kmax]) kmax = k;
		if (kmax !== j) {
			for (let i = 0; i < m; i++) {
				const t = a[i + j * m];
				a[i + j * m] = a[i + kmax * m];
				a[i + kmax * m] = t;
			}
			rDiagonal[kmax] = rDiagonal[j];
			work[kmax] = work[j];
			const p = pivot[j];
			pivot[j] = pivot[kmax];
			pivot[kmax] = p;
		}
		const cj = j * m;
		let ajnorm = euclideanNorm(a, cj + j, cj + m);
		if (ajnorm !== 0) {
			if (a[cj + j] < 0) ajnorm = -ajnorm;
			for (let i = j; i < m; i++) a[cj + i] /= ajnorm;
			a[cj + j] += 1;
			for (let k = j + 1; k < n; k++) {
				const ck = k * m;
				let sum = 0;
				for (let i = j; i < m; i++) sum += a[cj + i] * a[ck + i];
				const t = sum / a[cj + j];
				for (let i = j; i < m; i++) a[ck + i] -= t * a[cj + i];
				if (rDiagonal[k] !== 0) {
					const r = a[ck + j] / rDiagonal[k];
					rDiagonal[k] *= Math.sqrt(Math.max(0, 1 - r * r));
					const ratio = rDiagonal[k] / work[k];
					if (0.05 * ratio * ratio <= MACHINE_EPSILON) {
						rDiagonal[k] = euclideanNorm(a, ck + j + 1, ck + m);
						work[k] = rDiagonal[k];
					}
				}
			}
		}
		rDiagonal[j] = -ajnorm;
	}
	return { pivot, rDiagonal, columnNorms };
}

/**
 * Overwrite the length-m vector `b` with Qᵀ·b, using the Householder vectors left in `a` by
 * {@link qrFactorPivoted} (before its diagonal is replaced by R's).
 */
export function applyQTranspose(a: Float64Array, m: number, n: number, b: Float64Array): void {
	for (let j = 0; j < Math.min(m, n); j++) {
		const cj = j * m;
		const ujj = a[cj + j];
		if (ujj === 0) continue;
		let sum = 0;
		for (let i = j; i < m; i++) sum += a[cj + i] * b[i];
		const t = -sum / ujj;
		for (let i = j; i < m; i++) b[i] += t * a[cj + i];
	}
}

/** Singular values and right singular vectors of an m×n matrix (m ≥ n). */
export interface RightSvd {
	/** Singular values, in decreasing order. */
	values: number[];
	/** n×n, row-major; column k is the right singular vector of values[k]. */
	vectors: number[][];
}

/**
 * One-sided Jacobi SVD (Hestenes 1958), returning singular values and right singular vectors.
 * Chosen over Golub–Kahan because it computes small singular values to high relative accuracy
 * when the columns have been scaled (Demmel & Veselić, SIAM J. Matrix Anal. Appl. 13 (1992)
 * 1204), which is exactly what the rank decision on a column-scaled Jacobian needs.
 * `a` is row-major m×n and is not modified.
 */
export function rightSingularVectors(a: number[][]): RightSvd {
	const m = a.length;
	const n = m > 0 ? a[0].length : 0;
	const u = new Float64Array(m * n);
	for (let i = 0; i < m; i++) for (let j = 0; j < n; j++) u[i + j * m] = a[i][j];
	const v = new Float64Array(n * n);
	for (let j = 0; j < n; j++) v[j + j * n] = 1;
	const MAX_SWEEPS = 60;
	for (let sweep = 0; sweep < MAX_SWEEPS; sweep++) {
		let rotated = false;
		for (let p = 0; p < n - 1; p++) {
			for (let q = p + 1; q < n; q++) {
				let alpha = 0;
				let beta = 0;
				let gamma = 0;
				const cp = p * m;
				const cq = q * m;
				for (let i = 0; i < m; i++) {
					const x = u[cp + i];
					const y = u[cq + i];
					alpha += x * x;
					beta += y * y;
					gamma += x * y;
				}
				if (gamma === 0 || Math.abs(gamma) <= MACHINE_EPSILON * Math.sqrt(alpha * beta)) continue;
				rotated = true;
				const zeta = (beta - alpha) / (2 * gamma);
				const t = Math.sign(zeta || 1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
				const c = 1 / Math.sqrt(1 + t * t);
				const s = c * t;
				for (let i = 0; i < m; i++) {
					const x = u[cp + i];
					const y = u[cq + i];
					u[cp + i] = c * x - s * y;
					u[cq + i] = s * x + c * y;
				}
				for (let i = 0; i < n; i++) {
					const x = v[i + p * n];
					const y = v[i + q * n];
					v[i + p * n] = c * x - s * y;
					v[i + q * n] = s * x + c * y;
				}
			}
		}
		if (!rotated) break;
	}
	const order = Array.from({ length: n }, (_, j) => j);
	const norms = order.map((j) => euclideanNorm(u, j * m, j * m + m));
	order.sort((x, y) => norms[y] - norms[x]);
	return {
		values: order.map((j) => norms[j]),
		vectors: Array.from({ length: n }, (_, i) => order.map((j) => v[i + j * n]))
	};
}

/**
 * Lower-triangular L with L·Lᵀ = S for a symmetric positive SEMIdefinite S (row-major).
 * A pivot that is not clearly positive (≤ `relativeTolerance` × the largest diagonal) gives a
 * zero column, so a covariance with fixed (zero-variance) or perfectly correlated directions
 * still factorises; used to draw multivariate normal samples. Entries must be finite.
 */
export function choleskySemidefinite(s: number[][], relativeTolerance = 1e-12): number[][] {
	const n = s.length;
	const l = Array.from({ length: n }, () => new Array<number>(n).fill(0));
	let maxDiagonal = 0;
	for (let i = 0; i < n; i++) maxDiagonal = Math.max(maxDiagonal, s[i][i]);
	const floor = relativeTolerance * maxDiagonal;
	for (let j = 0; j < n; j++) {
		let d = s[j][j];
		for (let k = 0; k < j; k++) d -= l[j][k] * l[j][k];
		if (d <= floor) continue;
		const ljj = Math.sqrt(d);
		l[j][j] = ljj;
		for (let i = j + 1; i < n; i++) {
			let sum = s[i][j];
			for (let k = 0; k < j; k++) sum -= l[i][k] * l[j][k];
			l[i][j] = sum / ljj;
		}
	}
	return l;
}
