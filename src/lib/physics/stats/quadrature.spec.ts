import { describe, expect, it } from 'vitest';
import { integrateAdaptive } from './quadrature';

describe('integrateAdaptive (exact antiderivatives)', () => {
	it('∫₀^π sin x dx = 2 and ∫₀^1 eˣ dx = e − 1', () => {
		expect(integrateAdaptive(Math.sin, 0, Math.PI)).toBeCloseTo(2, 14);
		expect(integrateAdaptive(Math.exp, 0, 1)).toBeCloseTo(Math.E - 1, 14);
	});

	it('∫₀^1 √x dx = 2/3 despite the endpoint singularity in the derivative', () => {
		expect(integrateAdaptive(Math.sqrt, 0, 1)).toBeCloseTo(2 / 3, 12);
	});

	it('finds a narrow Lorentzian peak: ∫₋₁^1 ε/(x² + ε²) dx = 2·atan(1/ε)', () => {
		const eps = 1e-6;
		const value = integrateAdaptive((x) => eps / (x * x + eps * eps), -1, 1);
		expect(value / (2 * Math.atan(1 / eps))).toBeCloseTo(1, 10);
	});
});
