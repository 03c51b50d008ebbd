import type { Role } from './roles';

export type NavItem = { href: string; label: string; atLeast: Role };

/** The app's areas in the order a range works through them. */
export const NAV_ITEMS: NavItem[] = [
	{ href: '/', label: 'Overview', atLeast: 'viewer' },
	{ href: '/sessions', label: 'Sessions', atLeast: 'viewer' },
	{ href: '/rigs', label: 'Rigs', atLeast: 'viewer' },
	{ href: '/projectiles', label: 'Projectiles', atLeast: 'viewer' },
	{ href: '/plans', label: 'Test plans', atLeast: 'viewer' },
	{ href: '/imports', label: 'Imports', atLeast: 'analyst' },
	{ href: '/setup', label: 'Setup sheet', atLeast: 'viewer' },
	{ href: '/calibrations', label: 'Calibrations', atLeast: 'viewer' },
	{ href: '/rig-health', label: 'Rig health', atLeast: 'lead' },
	{ href: '/api-docs', label: 'API', atLeast: 'viewer' },
	{ href: '/users', label: 'Users', atLeast: 'admin' },
	{ href: '/mail', label: 'Mail', atLeast: 'admin' }
];
