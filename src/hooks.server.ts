// Hooks only compose handles: Auth.js, then who is asking, then the guard by route group.
import { sequence } from '@sveltejs/kit/hooks';
import type { Handle } from '@sveltejs/kit';
import { authHandle } from '$lib/server/auth';
import { identify, guardRouteGroups } from '$lib/server/request-guard';

export const handle: Handle = sequence(authHandle, identify, guardRouteGroups);
