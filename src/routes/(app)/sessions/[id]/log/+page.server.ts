import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRole } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import * as sessions from '$lib/server/sessions';
import * as shots from '$lib/server/shots';
import { fillTrim } from '$lib/server/firing-line';
import { shotUpdate, shotVoid, issuesOf } from '$lib/schemas/range';
import type { Actions, PageServerLoad } from './$types';

const RECENT_SHOTS = 8;

export const load: PageServerLoad = async (event) => {
	const user = await requireRole(event, 'range_officer');
	const id = idParam(event.params.id, 'range session');
	const view = await sessions.getOr404(id);
	const all = await shots.allForSession(id);
	const recent = all.slice(-RECENT_SHOTS).reverse();
	return {
		...view,
		shots: all,
		recent,
		nextSequence: (all.at(-1)?.sequence ?? 0) + 1,
		trim: await fillTrim(view.session, view.plan, all),
		userId: user.id
	};
};

/** The correction form's values: SI numbers written by the page (empty = no value); the shot's id. */
const correction = shotUpdate
	.pick({ fillGaugePa: true, muzzleSpeedMps: true, downrangeSpeedMps: true, impactXM: true, impactYM: true, miss: true, note: true, aboveRatingConfirmed: true })
	.required({ fillGaugePa: true })
	.extend({ shotId: z.number({ error: 'Choose a shot.' }).int().min(1, 'Choose a shot.') });

const NUMBER_FIELDS = ['shotId', 'fillGaugePa', 'muzzleSpeedMps', 'downrangeSpeedMps', 'impactXM', 'impactYM'] as const;

function formValues(data: FormData) {
	const values: Record<string, unknown> = { note: String(data.get('note') ?? '').trim() || null, miss: data.get('miss') === 'on', aboveRatingConfirmed: data.get('aboveRatingConfirmed') === 'on' };
	for (const key of NUMBER_FIELDS) {
		const text = String(data.get(key) ?? '').trim();
		values[key] = text === '' ? (key === 'shotId' || key === 'fillGaugePa' ? undefined : null) : Number(text);
	}
	return values;
}

/** A refusal in words, for the banner; the page keeps what was typed. */
function refusal(err: unknown) {
	if (err instanceof sessions.SessionRuleError) return fail(err.status === 422 ? 422 : err.status, { message: err.message, field: err.field });
	throw err;
}

export const actions: Actions = {
	/** An officer corrects one of their own shots while the session is open (analysts any); audited. */
	correctShot: async (event) => {
		const user = await requireRole(event, 'range_officer');
		const sessionId = idParam(event.params.id, 'range session');
		const parsed = correction.safeParse(formValues(await event.request.formData()));
		if (!parsed.success) return fail(400, { message: issuesOf(parsed.error).map((i) => i.message).join(' '), field: issuesOf(parsed.error)[0]?.path });
		const { shotId, ...patch } = parsed.data;
		try {
			await shots.assertInSession(shotId, sessionId);
			const after = await shots.update(shotId, patch, user);
			return { corrected: after.sequence };
		} catch (err) {
			return refusal(err);
		}
	},
	/** Void and re-shoot: the shot stays, with its reason, out of the statistics; audited. */
	voidShot: async (event) => {
		const user = await requireRole(event, 'range_officer');
		const sessionId = idParam(event.params.id, 'range session');
		const data = await event.request.formData();
		const shotId = Number(data.get('shotId'));
		const parsed = shotVoid.safeParse({ reason: data.get('reason') ?? '' });
		if (!Number.isInteger(shotId) || shotId < 1) return fail(400, { message: 'Choose a shot to void.', field: 'shotId' });
		if (!parsed.success) return fail(400, { message: issuesOf(parsed.error)[0].message, field: 'reason' });
		try {
			await shots.assertInSession(shotId, sessionId);
			const after = await shots.setVoided(shotId, parsed.data.reason, user);
			return { voided: after.sequence };
		} catch (err) {
			return refusal(err);
		}
	}
};
