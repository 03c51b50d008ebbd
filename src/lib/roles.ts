// Roles are cumulative: viewer < range officer < analyst < lead < admin (product brief).
// Shared by server and browser; the browser only uses it to hide what the server would refuse.
export const ROLE_ORDER = ['viewer', 'range_officer', 'analyst', 'lead', 'admin'] as const;
export type Role = (typeof ROLE_ORDER)[number];

export const ROLE_LABELS: Record<Role, string> = {
	viewer: 'Viewer',
	range_officer: 'Range officer',
	analyst: 'Analyst',
	lead: 'Lead',
	admin: 'Admin'
};

export function hasRole(role: Role, atLeast: Role): boolean {
	return ROLE_ORDER.indexOf(role) >= ROLE_ORDER.indexOf(atLeast);
}

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (ROLE_ORDER as readonly string[]).includes(value);
}
