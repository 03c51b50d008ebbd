// The firing line's guard, from a session's shots as the log page has them: each shot's verdict
// against the plan with its reasons, the count of valid shots, the running mean and SD, and the
// run of out-of-tolerance shots that calls for a stop. Pure: the page and its tests share it.
// A shot is valid when it met both the speed and the impact tolerance (the session statistics'
// "passed both"); voided shots count for nothing.

export type GuardShot = {
	sequence: number;
	muzzleSpeedMps: number | null;
	miss: boolean;
	impactXM: number | null;
	impactYM: number | null;
	voidedAt: Date | string | null;
	prediction: { passSpeed: boolean | null; passImpact: boolean | null; judgedSpeedMps: number | null; speedBasis: string | null } | null;
};

export type GuardPlan = { requiredSpeedMps: number; speedTolerancePct: number; impactToleranceM: number; shotsRequired: number; stopAfterOutOfTolerance: number };

export type Reason =
	| { kind: 'speed'; pass: boolean; judgedMps: number; requiredMps: number; deviationPct: number; tolerancePct: number; basis: string | null }
	| { kind: 'impact'; pass: boolean; radiusM: number; toleranceM: number }
	| { kind: 'miss' };

export type Verdict = { status: 'within' | 'outside' | 'not judged'; reasons: Reason[] };

export const isOutside = (shot: GuardShot) => shot.prediction?.passSpeed === false || shot.prediction?.passImpact === false;
export const isValid = (shot: GuardShot) => shot.voidedAt === null && shot.prediction?.passSpeed === true && shot.prediction?.passImpact === true;

/** The shot against the plan, with the figures behind the verdict. */
export function verdictOf(shot: GuardShot, plan: GuardPlan | null): Verdict {
	const p = shot.prediction;
	if (!plan || !p || (p.passSpeed === null && p.passImpact === null)) return { status: 'not judged', reasons: [] };
	const reasons: Reason[] = [];
	if (p.passSpeed !== null && p.judgedSpeedMps !== null)
		reasons.push({
			kind: 'speed',
			pass: p.passSpeed,
			judgedMps: p.judgedSpeedMps,
			requiredMps: plan.requiredSpeedMps,
			deviationPct: ((p.judgedSpeedMps - plan.requiredSpeedMps) / plan.requiredSpeedMps) * 100,
			tolerancePct: plan.speedTolerancePct,
			basis: p.speedBasis
		});
	if (shot.miss) reasons.push({ kind: 'miss' });
	else if (p.passImpact !== null && shot.impactXM !== null && shot.impactYM !== null)
		reasons.push({ kind: 'impact', pass: p.passImpact, radiusM: Math.hypot(shot.impactXM, shot.impactYM), toleranceM: plan.impactToleranceM });
	// Failed reasons first: the officer reads what went wrong before what went right.
	reasons.sort((a, b) => Number('pass' in a ? a.pass : false) - Number('pass' in b ? b.pass : false));
	return { status: isOutside(shot) ? 'outside' : 'within', reasons };
}

/** Mean and sample SD of the measured muzzle speeds of the shots not voided (SD null below two shots). */
export function runningSpeed(shots: GuardShot[]): { n: number; meanMps: number | null; sdMps: number | null } {
	const speeds = shots.filter((s) => s.voidedAt === null && s.muzzleSpeedMps !== null).map((s) => s.muzzleSpeedMps as number);
	const n = speeds.length;
	if (n === 0) return { n, meanMps: null, sdMps: null };
	const mean = speeds.reduce((a, b) => a + b, 0) / n;
	const sd = n < 2 ? null : Math.sqrt(speeds.reduce((a, v) => a + (v - mean) ** 2, 0) / (n - 1));
	return { n, meanMps: mean, sdMps: sd };
}

/** Out-of-tolerance shots in a row at the end of the session (voided shots skipped). */
export function outsideRun(shots: GuardShot[]): number {
	const live = shots.filter((s) => s.voidedAt === null).sort((a, b) => a.sequence - b.sequence);
	let run = 0;
	for (let i = live.length - 1; i >= 0 && isOutside(live[i]); i--) run++;
	return run;
}

export function validCount(shots: GuardShot[]) {
	return shots.filter(isValid).length;
}
