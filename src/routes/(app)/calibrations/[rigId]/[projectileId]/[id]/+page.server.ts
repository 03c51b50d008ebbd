import { error, fail, redirect } from '@sveltejs/kit';
import { prefsFor } from '$lib/format';
import { requireRole, requireUser } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import { db } from '$lib/server/db';
import { calibrationDetail, calibrationOfPair } from '$lib/server/calibrations';
import { approveCalibration, ReconcileError } from '$lib/server/reconcile';
import type { Actions, PageServerLoad } from './$types';

function ids(params: { rigId?: string; projectileId?: string; id?: string }) {
	return { rigId: idParam(params.rigId, 'rig'), projectileId: idParam(params.projectileId, 'projectile'), id: idParam(params.id, 'calibration') };
}

export const load: PageServerLoad = async (event) => {
	const user = await requireUser(event);
	const { rigId, projectileId, id } = ids(event.params);
	return {
		detail: await calibrationDetail(rigId, projectileId, id, prefsFor(user.unitPreferences)),
		fitted: event.url.searchParams.has('fitted'),
		approved: event.url.searchParams.has('approved')
	};
};

export const actions: Actions = {
	/** Lead+: supersede the pair's approved calibration, approve this draft, recompute the residuals (one transaction, audited). */
	approveCalibration: async (event) => {
		const user = await requireRole(event, 'lead');
		const { rigId, projectileId, id } = ids(event.params);
		if (!(await calibrationOfPair(id, rigId, projectileId))) error(404, { message: `No calibration with id ${id} for this rig and projectile.` });
		try {
			await approveCalibration(db, id, user);
		} catch (err) {
			if (err instanceof ReconcileError) return fail(err.status, { message: err.message });
			throw err;
		}
		redirect(303, `/calibrations/${rigId}/${projectileId}/${id}?approved=1`);
	}
};
