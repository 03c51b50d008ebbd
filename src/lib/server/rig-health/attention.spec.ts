import { describe, expect, it } from 'vitest';
import { assessRig, BIAS_ATTENTION_PCT, CALIBRATION_MAX_AGE_DAYS, type CalibrationAge, type SessionHealth } from './attention';

const now = new Date('2026-03-10T12:00:00Z');
const daysAgo = (d: number) => new Date(now.getTime() - d * 24 * 3600 * 1000);

function session(d: number, over: Partial<SessionHealth> = {}): SessionHealth {
	return {
		projectileId: 1,
		projectileName: 'Ice ball 45 mm',
		startedAt: daysAgo(d),
		biasPercent: { mean: 0.2, lower: -0.3, upper: 0.7 },
		uncalibrated: false,
		driftFlagged: false,
		cepM: 0.01,
		...over
	};
}
const calibrated: CalibrationAge[] = [{ projectileId: 1, projectileName: 'Ice ball 45 mm', calibrationId: 7, ageDays: 20 }];

describe('assessRig', () => {
	it('is in good order with an unbiased recent session and a fresh calibration', () => {
		const a = assessRig([session(3)], calibrated, now);
		expect(a).toMatchObject({ level: 'good', word: 'In good order', shape: '●', findings: [] });
	});

	it('needs attention for a significant bias beyond the limit, and says it was uncalibrated', () => {
		const a = assessRig([session(3, { biasPercent: { mean: -6.1, lower: -6.5, upper: -5.7 }, uncalibrated: true, driftFlagged: true })], [], now);
		expect(a.level).toBe('attention');
		expect(a.shape).toBe('▲');
		expect(a.summary).toBe(
			'Needs attention: bias −6.1 % with Ice ball 45 mm (uncalibrated); drift flagged in the latest session with Ice ball 45 mm; no approved calibration with Ice ball 45 mm'
		);
	});

	it('does not count a bias whose interval includes zero, however large its mean', () => {
		const a = assessRig([session(3, { biasPercent: { mean: BIAS_ATTENTION_PCT + 2, lower: -1, upper: 11 } })], calibrated, now);
		expect(a.level).toBe('good');
	});

	it('watches a small but significant bias', () => {
		const a = assessRig([session(3, { biasPercent: { mean: 1.5, lower: 1.1, upper: 1.9 } })], calibrated, now);
		expect(a.level).toBe('watch');
		expect(a.summary).toBe('Watch: bias +1.5 % with Ice ball 45 mm');
	});

	it('flags a bias that trends across sessions (seal wear) even when each session is within limits', () => {
		const sessions = [40, 30, 20, 10, 2].map((d, i) => session(d, { biasPercent: { mean: -0.4 * i, lower: -0.4 * i - 0.6, upper: -0.4 * i + 0.6 } }));
		const a = assessRig(sessions, calibrated, now);
		expect(a.level).toBe('attention');
		expect(a.findings[0].text).toMatch(/^bias with Ice ball 45 mm trending −0\.3 % per week across sessions$/);
	});

	it('watches a group that grew wider than the rig’s usual, in the reader’s units', () => {
		const sessions = [session(30, { cepM: 0.008 }), session(20, { cepM: 0.01 }), session(2, { cepM: 0.02 })];
		const a = assessRig(sessions, calibrated, now, (m) => `${(m / 0.0254).toFixed(2)} in`);
		expect(a.level).toBe('watch');
		expect(a.findings.map((f) => f.text)).toEqual(['CEP with Ice ball 45 mm grew to 0.79 in from a usual 0.31 in']);
	});

	it('watches an old calibration of a projectile the rig still fires', () => {
		const a = assessRig([session(3)], [{ ...calibrated[0], ageDays: CALIBRATION_MAX_AGE_DAYS + 5 }], now);
		expect(a.summary).toBe('Watch: calibration with Ice ball 45 mm is 185 days old');
	});

	it('says so when the rig has no recent sessions, and ignores old findings', () => {
		expect(assessRig([], [], now)).toMatchObject({ level: 'idle', word: 'No recent sessions', shape: '○' });
		const old = session(200, { biasPercent: { mean: -9, lower: -10, upper: -8 } });
		expect(assessRig([old], calibrated, now).level).toBe('idle');
	});
});
