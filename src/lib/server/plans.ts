import { testPlans as table } from './db/schema';
import { registry } from './registry';
import type { TestPlanInput } from '$lib/schemas/range';

export type TestPlan = typeof table.$inferSelect;

export const plans = registry<typeof table, TestPlan, TestPlanInput, 'name' | 'requiredSpeedMps' | 'targetDistanceM' | 'updatedAt'>(table, {
	entityType: 'test_plan',
	sortable: { name: table.name, requiredSpeedMps: table.requiredSpeedMps, targetDistanceM: table.targetDistanceM, updatedAt: table.updatedAt },
	defaultSort: 'name'
});
