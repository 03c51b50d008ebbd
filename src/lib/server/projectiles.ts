import { projectiles as table } from './db/schema';
import { registry } from './registry';
import { recomputePredictions } from './reconcile';
import type { ProjectileInput } from '$lib/schemas/range';

export type Projectile = typeof table.$inferSelect;

export const projectiles = registry<typeof table, Projectile, ProjectileInput, 'name' | 'massKg' | 'diameterM' | 'updatedAt'>(table, {
	entityType: 'projectile',
	sortable: { name: table.name, massKg: table.massKg, diameterM: table.diameterM, updatedAt: table.updatedAt },
	defaultSort: 'name',
	// Mass, diameter and the nominal drag coefficient feed every prediction with this projectile.
	afterUpdate: (tx, id) => recomputePredictions(tx, { projectileId: id })
});
