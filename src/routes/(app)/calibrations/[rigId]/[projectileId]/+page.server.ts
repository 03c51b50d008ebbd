import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { requireRole, requireUser } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import { db } from '$lib/server/db';
import { fitCalibrationInput } from '$lib/schemas/calibration';
import { pairView, parseShotRefs, resolveShotRefs } from '$lib/server/calibrations';
import { fitCalibration, ReconcileError } from '$lib/server/reconcile';
import type { Actions, PageServerLoad } from './$types';

const adapter = zod4(fitCalibrationInput);

function pairParams(params: { rigId?: string; projectileId?: string }) {
	return { rigId: idParam(params.rigId, 'rig'), projectileId: idParam(params.projectileId, 'projectile') };
}

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	const { rigId, projectileId } = pairParams(event.params);
	const from = event.url.searchParams.get('from');
	const view = await pairView(rigId, projectileId, {
		fromCalibrationId: from && /^\d+$/.test(from) ? Number(from) : null,
		exclude: parseShotRefs(event.url.searchParams.get('exclude'))
	});
	return { view, form: await superValidate(view.form, adapter, { errors: false }) };
};

/** ReconcileError fields (exclusions[2].shotId) → this form's fields (exclusions[2].sequence). */
function formField(field: string | null): string {
	if (!field) return '';
	return field.replace(/\.shotId$/, '.sequence').replace(/^(rigId|projectileId|measurementSds.*)$/, '');
}

export const actions: Actions = {
	fitCalibration: async (event) => {
		const user = await requireRole(event, 'analyst');
		const { rigId, projectileId } = pairParams(event.params);
		const form = await superValidate(event.request, adapter);
		if (!form.valid) return fail(400, { form });
		const refs = await resolveShotRefs(form.data.exclusions);
		if (!refs.ok) return setError(form, `exclusions[${refs.index}].sequence`, 'No shot with this number in that session.');
		let id: number;
		try {
			const result = await fitCalibration(db, {
				rigId,
				projectileId,
				sessionIds: form.data.sessionIds,
				...(form.data.model === 'auto'
					? { model: 'auto' as const }
					: {
							model: {
								family: form.data.model,
								drag: form.data.drag,
								pressureSlope: form.data.parameters.includes('pressureSlope'),
								energyOffset: form.data.parameters.includes('energyOffset'),
								dragCoefficient: form.data.parameters.includes('dragCoefficient'),
								elevationBias: form.data.parameters.includes('elevationBias')
							}
						}),
				exclusions: form.data.exclusions.map((e, i) => ({ shotId: refs.shotIds[i], reason: e.reason })),
				userId: user.id,
				notes: form.data.notes || null
			});
			id = result.calibration.id;
		} catch (err) {
			if (err instanceof ReconcileError) {
				if (err.status === 404 && (err.field === 'rigId' || err.field === 'projectileId')) return fail(404, { form });
				return setError(form, formField(err.field) as never, err.message, { status: err.status === 404 ? 400 : (err.status as 400) });
			}
			throw err;
		}
		redirect(303, `/calibrations/${rigId}/${projectileId}/${id}?fitted=1`);
	}
};
