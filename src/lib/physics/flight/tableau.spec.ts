import { describe, expect, it } from 'vitest';
import { DOP853, type PackedRows } from './tableau';

// The typed-in DOP853 coefficients must satisfy the conditions every Runge–Kutta tableau of
// order 8 satisfies (Hairer, Nørsett & Wanner, "Solving ODEs I", 2nd ed. 1993, §II.2, eq. (2.3)
// row-sum condition and the quadrature conditions Σ b_i c_i^(q−1) = 1/q for q ≤ 8, and §II.10).
// A wrong digit anywhere in a row breaks one of them.

function row(rows: PackedRows, r: number): [number, number][] {
	const out: [number, number][] = [];
	for (let p = rows.start[r]; p < rows.start[r + 1]; p++) out.push([rows.index[p], rows.value[p]]);
	return out;
}

describe('DOP853 tableau (Hairer, Nørsett & Wanner 1993; dop853.f)', () => {
	it('row sums equal the nodes: Σ_j a_sj = c_s for all 16 stages', () => {
		for (let s = 0; s < DOP853.allStages; s++) {
			const sum = row(DOP853.rows, s).reduce((acc, [, a]) => acc + a, 0);
			expect(Math.abs(sum - DOP853.nodes[s]), `stage ${s}`).toBeLessThan(1e-14);
		}
	});

	it('each stage uses only earlier stages (explicit method)', () => {
		for (let s = 0; s < DOP853.allStages; s++) {
			for (const [j] of row(DOP853.rows, s)) expect(j).toBeLessThan(s);
		}
	});

	it('weights b (row 12) satisfy the quadrature conditions Σ b_i c_i^(q−1) = 1/q, q = 1..8', () => {
		const b = row(DOP853.rows, 12);
		for (let q = 1; q <= 8; q++) {
			const sum = b.reduce((acc, [i, w]) => acc + w * DOP853.nodes[i] ** (q - 1), 0);
			expect(Math.abs(sum - 1 / q), `q = ${q}`).toBeLessThan(1e-13);
		}
	});

	it('both error estimates vanish on constants: Σ e5 = Σ e3 = 0', () => {
		for (const e of [DOP853.error5, DOP853.error3]) {
			const sum = row(e, 0).reduce((acc, [, w]) => acc + w, 0);
			expect(Math.abs(sum)).toBeLessThan(1e-14);
		}
	});

	it('the stage at node 1 with weights b is the new point (first same as last)', () => {
		expect(DOP853.nodes[12]).toBe(1);
		expect(DOP853.stepStages).toBe(13);
	});
});
