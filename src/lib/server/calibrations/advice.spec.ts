import { describe, expect, it } from 'vitest';
import { crossValidationVerdict } from './advice';

const cv = (muzzle: number) => ({ method: 'k-fold' as const, folds: 5, failedFolds: 0, rmsByKind: { muzzleSpeed: muzzle, downrangeSpeed: null, impactHeight: null } });
const floor = { muzzleSpeed: 1, downrangeSpeed: null, impactHeight: null };

describe('whether a calibration predicts unseen shots, in words (CV_GOOD_RATIO 1.5, CV_POOR_RATIO 3: judgement, not theory)', () => {
	it('near the floor is good; the advice for a poorer fit depends on the model that was fitted', () => {
		expect(crossValidationVerdict({ crossValidation: cv(1.2), noiseFloorByKind: floor, covarianceParameters: ['eta0'] }).level).toBe('good');
		const plain = crossValidationVerdict({ crossValidation: cv(2), noiseFloorByKind: floor, covarianceParameters: ['eta0'] });
		expect(plain.level).toBe('watch');
		expect(plain.text).toMatch(/automatic model choice/);
		const compared = crossValidationVerdict({ crossValidation: cv(2), noiseFloorByKind: floor, covarianceParameters: ['eta0'], comparison: { method: 'k-fold', folds: 5, noiseFloorByKind: floor, candidates: [], proposed: null, reason: '' } });
		expect(compared.text).toMatch(/valve-flow model in the table above/);
		const valve = crossValidationVerdict({ crossValidation: cv(4), noiseFloorByKind: floor, covarianceParameters: ['valveAreaM2', 'openingTimeS', 'frictionN'], model: { family: 'valve-flow', drag: 'constant' } });
		expect(valve.level).toBe('poor');
		expect(valve.text).not.toMatch(/η1|valve-flow model/);
		expect(valve.text).toMatch(/^Held-out error is 4\.0 × .* Calibrate over a narrower pressure range/);
	});
});
