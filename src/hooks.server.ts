// Hooks only compose handles: where a write comes from and how cookies are set, then Auth.js,
// then who is asking, then the guard by route group. init starts the mail outbox's worker.
import { sequence } from '@sveltejs/kit/hooks';
import type { Handle, ServerInit } from '@sveltejs/kit';
import { building } from '$app/environment';
import { authHandle } from '$lib/server/auth';
import { startOutboxWorker } from '$lib/server/mail/outbox';
import { guardRequestOrigin, identify, guardRouteGroups, secureCookiesByProtocol } from '$lib/server/request-guard';

export const init: ServerInit = () => {
	if (!building) startOutboxWorker();
};

export const handle: Handle = sequence(guardRequestOrigin, secureCookiesByProtocol, authHandle, identify, guardRouteGroups);
