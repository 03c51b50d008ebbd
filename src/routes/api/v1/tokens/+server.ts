import { issueTokenSchema } from '$lib/schemas/accounts';
import { endpoint, fail, ok, parseBody } from '$lib/server/api';
import * as tokens from '$lib/server/accounts/tokens';
import type { RequestHandler } from './$types';

/**
 * Public on purpose (PUBLIC_API_ROUTES): a script without a token trades e-mail and password for
 * one. The credentials are the check here, under the same rate limit as the sign-in page.
 */
export const POST: RequestHandler = endpoint(async (event) => {
	const input = await parseBody(event.request, issueTokenSchema);
	const result = await tokens.issueTokenForCredentials(input, event.getClientAddress());
	if (!result.ok) fail(result.status, result.message);
	return ok({ id: result.id, name: result.name, token: result.token }, 201);
});
