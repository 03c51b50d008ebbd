// End-to-end check of a calibration on the synthetic campaigns of shared/reference/campaigns (made
// with a launcher simulation richer than either of Shotwright's families; see their README): fit
// on odd sequence numbers, predict the even ones, compare the held-out RMS with the file's noise
// floor. Protocol and floors: shared/reference/campaigns/README.md.
//
// Targets (issue 13): held-out muzzle speed ≤ 1.3× and impact height ≤ 1.4× the floor with the
// proposed model. Met on pub-nylon40 and pub-steel20. Not met yet on the ice campaigns, whose
// sweeps reach down to a few kPa above the pressure where the ball barely leaves the barrel: the
// held-out RMS there is dominated by the two or three lowest even shots (an impact error of
// 0.05–0.25 m from a 1–3 m/s speed error at 22–30 m/s). Their bounds below are today's figures
// with a small margin, so a regression fails; the table is printed for the README.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { CAMPAIGN_FILES, campaignShots, campaignSds, type CampaignFile } from './campaigns';
import { compareModels } from './compare';
import { predictShot } from './model';

const DIR = path.resolve('..', 'shared', 'reference', 'campaigns');
const load = (name: string) => JSON.parse(readFileSync(path.join(DIR, name), 'utf8')) as CampaignFile;

/** Upper bounds on held-out RMS ÷ floor: the targets where met, today's figure + margin where not. */
const BOUNDS: Record<(typeof CAMPAIGN_FILES)[number], { speed: number; impact: number; targetMet: boolean }> = {
	'pub-ice35.json': { speed: 1.45, impact: 2.5, targetMet: false },
	'pub-ice45.json': { speed: 1.3, impact: 1.6, targetMet: false },
	'pub-nylon40.json': { speed: 1.3, impact: 1.4, targetMet: true },
	'pub-steel20.json': { speed: 1.3, impact: 1.4, targetMet: true }
};

const rms = (xs: number[]) => Math.sqrt(xs.reduce((s, v) => s + v * v, 0) / xs.length);

describe('calibration campaigns (shared/reference/campaigns): fit the odd shots, predict the even ones', () => {
	const table: string[] = [];
	for (const name of CAMPAIGN_FILES) {
		it(`${name}: the proposed model's held-out RMS against the file's noise floor`, () => {
			const c = load(name);
			const shots = campaignShots(c);
			const train = shots.filter((s) => s.sequence % 2 === 1);
			const test = shots.filter((s) => s.sequence % 2 === 0);
			const result = compareModels(train, campaignSds(c), { sphere: c.projectile.shape === 'sphere' });
			expect(result.proposed, result.comparison.reason).not.toBeNull();
			const cal = result.proposed!.calibration;
			const speed: number[] = [];
			const impact: number[] = [];
			for (const s of test) {
				const p = predictShot(cal, s);
				expect(p.ok, `even shot ${s.sequence} could not be predicted`).toBe(true);
				if (!p.ok) continue;
				if (s.muzzleSpeedMps !== undefined) speed.push(s.muzzleSpeedMps - p.muzzleSpeedMps);
				if (s.impactHeightM !== undefined) impact.push(s.impactHeightM - p.impact.heightM);
			}
			const speedRatio = rms(speed) / c.noiseFloor.muzzleSpeedMps;
			const impactRatio = rms(impact) / c.noiseFloor.impactYM;
			const bound = BOUNDS[name];
			table.push(
				`| ${name} | ${result.comparison.proposed} | ${speedRatio.toFixed(2)} | ${impactRatio.toFixed(2)} | ${bound.targetMet ? 'met' : 'not met'} |`
			);
			console.log(`${name}: proposed ${result.comparison.proposed}; held-out speed ${speedRatio.toFixed(3)}× floor, impact ${impactRatio.toFixed(3)}× floor`);
			expect(speedRatio).toBeLessThanOrEqual(bound.speed);
			expect(impactRatio).toBeLessThanOrEqual(bound.impact);
			// The comparison itself is side by side: every candidate is listed, the proposed one scored.
			expect(result.comparison.candidates.length).toBeGreaterThanOrEqual(4);
			expect(result.comparison.candidates.find((o) => o.key === result.comparison.proposed)!.score).toBeLessThan(2);
		}, 240_000);
	}
	it('prints the table', () => {
		if (table.length) console.log(['| campaign | proposed | speed ÷ floor | impact ÷ floor | target |', ...table].join('\n'));
	});
});

describe('fits start by themselves on any part of a campaign (no starting values typed)', () => {
	for (const name of CAMPAIGN_FILES) {
		const c = load(name);
		const shots = campaignShots(c);
		const lowest = [...shots].sort((a, b) => a.fillGaugePa - b.fillGaugePa).slice(0, 10);
		const ten = shots.filter((_, i) => i % 12 === 0).slice(0, 10);
		for (const [subset, chosen] of [
			['its 10 lowest pressures', lowest],
			['10 shots spread over the sweep', ten]
		] as const) {
			it(`${name}, ${subset}: the automatic comparison proposes a converged calibration`, () => {
				const r = compareModels(chosen, campaignSds(c), { sphere: true });
				expect(r.proposed, r.comparison.reason).not.toBeNull();
				expect(r.proposed!.converged, r.proposed!.message).toBe(true);
				expect(r.proposed!.nUsed.shots + r.proposed!.unused.length).toBe(chosen.length);
				// A candidate that cannot describe these shots says why, in words, instead of failing the run.
				for (const o of r.comparison.candidates) expect(o.message.length).toBeGreaterThan(0);
				for (const p of r.proposed!.parameters) if (!p.identifiable) expect(p.reason).toMatch(/cannot be (determined|told apart)/);
			}, 120_000);
		}
	}
});
