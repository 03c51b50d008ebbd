// The invented demo lab's people (used by the seed, printed by npm start, used by e2e tests).
export const DEMO_PASSWORD = 'demo-range-2026';
export const DEMO_USERS = [
	{ email: 'admin@northfold-range.test', name: 'Marit Olsen-Vale', role: 'admin' },
	{ email: 'lead@northfold-range.test', name: 'Jonas Ferreira-Holm', role: 'lead' },
	{ email: 'analyst@northfold-range.test', name: 'Wren Adeyemi', role: 'analyst' },
	{ email: 'officer@northfold-range.test', name: 'Tove Lindqvist-Baraka', role: 'range_officer' },
	{ email: 'viewer@northfold-range.test', name: 'Casimir Oduya', role: 'viewer' }
];
