import type { Role } from './roles';

export type NavItem = { href: string; label: string; atLeast: Role };

/** The app's areas in the order a range works through them. */
export const NAV_ITEMS: NavItem[] = [{ href: '/', label: 'Overview', atLeast: 'viewer' }];
