// POST /api/v1/setup-sheet: the setup sheet as JSON, for the setup page's live preview and for
// scripts. Any signed-in user may ask (it reads, it writes nothing). Errors in the API's one
// shape (api.ts): 400 naming the fields, 404 for an unknown plan, rig or projectile, and 422 when
// the sheet is refused (a fill above the rated working pressure, no elevation reaches the aim).
import { prefsFor } from '$lib/format';
import { setupSheetInput } from '$lib/schemas/setup-sheet';
import { apiError, endpoint, ok, parseBody } from '../api';
import { db } from '../db';
import { requireUser } from '../guards';
import { setupSheet } from './index';

export const setupSheetApi = {
	create: endpoint(async (event) => {
		const user = await requireUser(event);
		const input = await parseBody(event.request, setupSheetInput);
		const result = await setupSheet(db, input, prefsFor(user.unitPreferences));
		if (!result.ok) return apiError(422, result.message, [{ path: result.field, message: result.message }]);
		return ok(result.sheet);
	})
};
