// The fit form of a calibration (issue 8): which sessions, which optional parameters, which shots
// to leave out and why. Shared by the page's form (superforms, browser) and the fitCalibration
// action (server). The efficiency η0 is always fitted, so it is not a choice here.
import { z } from 'zod';
import { DRAG_LAWS, LAUNCHER_FAMILIES } from '$lib/physics/launcher/families';

export const OPTIONAL_PARAMETERS = ['pressureSlope', 'energyOffset', 'dragCoefficient', 'elevationBias'] as const;
/** 'auto': every candidate model, compared by held-out error (physics.md §5); or one family. */
export const MODEL_CHOICES = ['auto', ...LAUNCHER_FAMILIES] as const;
export { DRAG_LAWS };
export type OptionalParameter = (typeof OPTIONAL_PARAMETERS)[number];

/** calibration_exclusions.reason is VARCHAR(500). */
export const EXCLUSION_REASON_MAX = 500;

/**
 * A shot is named by its session and sequence number, as the range knows it; the action finds
 * its id. (A list of every shot to pick from would not scale to imported sessions.)
 */
export const exclusionInput = z.object({
	sessionId: z.number({ error: 'Choose the session of the shot.' }).int('Choose the session of the shot.').positive('Choose the session of the shot.'),
	sequence: z
		.number({ error: 'Give the shot number.' })
		.int('The shot number is a whole number.')
		.positive('The shot number is at least 1.')
		.max(1_000_000, 'The shot number is at most 1000000.'),
	reason: z
		.string({ error: 'Give a reason for leaving this shot out.' })
		.trim()
		.min(1, 'Give a reason for leaving this shot out; it is kept with the calibration.')
		.max(EXCLUSION_REASON_MAX, `Keep the reason to ${EXCLUSION_REASON_MAX} characters.`)
});

export const fitCalibrationInput = z
	.object({
		sessionIds: z
			.array(z.number().int().positive())
			.min(1, 'Choose at least one range session to fit.')
			.max(500, 'Fit at most 500 sessions at once.'),
		model: z.enum(MODEL_CHOICES, { error: 'Choose automatic, gas work or valve flow.' }).default('auto'),
		drag: z.enum(DRAG_LAWS, { error: 'Choose a constant C_D or the sphere correlation.' }).default('constant'),
		parameters: z.array(z.enum(OPTIONAL_PARAMETERS, { error: 'Unknown parameter.' })).default([]),
		exclusions: z.array(exclusionInput).max(5000, 'Exclude at most 5000 shots.').default([]),
		notes: z.string().trim().max(4000, 'Notes are at most 4000 characters.').nullish()
	})
	.superRefine((input, ctx) => {
		const seen = new Set<string>();
		input.exclusions.forEach((e, i) => {
			const key = `${e.sessionId}:${e.sequence}`;
			if (seen.has(key))
				ctx.addIssue({ code: 'custom', path: ['exclusions', i, 'sequence'], message: 'This shot is excluded twice; give it one reason.' });
			seen.add(key);
			if (!input.sessionIds.includes(e.sessionId))
				ctx.addIssue({ code: 'custom', path: ['exclusions', i, 'sessionId'], message: 'This shot’s session is not among the sessions chosen for the fit.' });
		});
	});
export type FitCalibrationInput = z.infer<typeof fitCalibrationInput>;
