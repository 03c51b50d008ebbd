import { eq } from 'drizzle-orm';
import { rangeSessions, testPlans as table } from './db/schema';
import { recomputePredictions } from './reconcile';
import { registry } from './registry';
import type { TestPlanInput } from '$lib/schemas/range';

export type TestPlan = typeof table.$inferSelect;

export const plans = registry<typeof table, TestPlan, TestPlanInput, 'name' | 'requiredSpeedMps' | 'targetDistanceM' | 'updatedAt'>(table, {
	entityType: 'test_plan',
	sortable: { name: table.name, requiredSpeedMps: table.requiredSpeedMps, targetDistanceM: table.targetDistanceM, updatedAt: table.updatedAt },
	defaultSort: 'name',
	// Leads own test plans (product brief): the lead who writes one is its owner.
	creatorColumn: 'ownerId',
	// Pass/fail of every shot judged against the plan.
	afterUpdate: async (tx, id) => {
		const judged = await tx.select({ id: rangeSessions.id }).from(rangeSessions).where(eq(rangeSessions.testPlanId, id));
		await recomputePredictions(tx, { sessionIds: judged.map((s) => s.id) });
	}
});
