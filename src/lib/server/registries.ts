// The three registries' page adapters: who may edit them and their new-record defaults.
import { projectileInput, rigInput, testPlanInput } from '$lib/schemas/range';
import { plans } from './plans';
import { projectiles } from './projectiles';
import { registryRoutes } from './registry-routes';
import { rigs } from './rigs';

export const rigRoutes = registryRoutes({
	registry: rigs,
	schema: rigInput,
	editRole: 'analyst',
	noun: 'rig',
	path: '/rigs',
	defaults: { nominalEfficiency: 0.6, deadM3: 0 }
});

export const projectileRoutes = registryRoutes({
	registry: projectiles,
	schema: projectileInput,
	editRole: 'analyst',
	noun: 'projectile',
	path: '/projectiles',
	defaults: { shape: 'sphere', nominalDragCoefficient: 0.47 }
});

/** Leads own test plans (product brief). */
export const planRoutes = registryRoutes({
	registry: plans,
	schema: testPlanInput,
	editRole: 'lead',
	noun: 'test plan',
	path: '/plans',
	defaults: { speedAt: 'target', speedTolerancePct: 5, shotsRequired: 10 }
});
