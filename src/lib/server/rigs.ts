import { rigs as table } from './db/schema';
import { registry } from './registry';
import { recomputePredictions } from './reconcile';
import type { RigInput } from '$lib/schemas/range';

export type Rig = typeof table.$inferSelect;

export const rigs = registry<typeof table, Rig, RigInput, 'name' | 'ratedPressurePa' | 'boreDiameterM' | 'updatedAt'>(table, {
	entityType: 'rig',
	sortable: { name: table.name, ratedPressurePa: table.ratedPressurePa, boreDiameterM: table.boreDiameterM, updatedAt: table.updatedAt },
	defaultSort: 'name',
	// The nominal efficiency feeds every uncalibrated prediction of the rig.
	afterUpdate: (tx, id) => recomputePredictions(tx, { rigId: id })
});
