import { and, count, desc, eq, gte, isNull } from 'drizzle-orm';
import { db } from './db';
import { projectiles, rangeSessions, rigs, shots } from './db/schema';

/** Sessions listed on the overview: every open one (up to this many), then the latest closed ones up to RECENT_LISTED rows. */
const MAX_OPEN_LISTED = 50;
const RECENT_LISTED = 8;

function sessionRows() {
	return db
		.select({
			id: rangeSessions.id,
			title: rangeSessions.title,
			status: rangeSessions.status,
			startedAt: rangeSessions.startedAt,
			rig: rigs.name,
			projectile: projectiles.name
		})
		.from(rangeSessions)
		.innerJoin(rigs, eq(rigs.id, rangeSessions.rigId))
		.innerJoin(projectiles, eq(projectiles.id, rangeSessions.projectileId))
		.$dynamic();
}

/** Figures for the overview page: what exists, what is open, what was fired this week. */
export async function overview(now = new Date()) {
	const weekAgo = new Date(now.getTime() - 7 * 24 * 3600 * 1000);
	const [[rigCount], [openSessions], [shotsThisWeek], recentSessions] = await Promise.all([
		db.select({ n: count() }).from(rigs).where(isNull(rigs.deletedAt)),
		db
			.select({ n: count() })
			.from(rangeSessions)
			.where(and(eq(rangeSessions.status, 'open'), isNull(rangeSessions.deletedAt))),
		db
			.select({ n: count() })
			.from(shots)
			.where(and(gte(shots.firedAt, weekAgo), isNull(shots.deletedAt))),
		// Every open session first (the range's work today), then the latest closed ones.
		Promise.all([
			sessionRows().where(and(eq(rangeSessions.status, 'open'), isNull(rangeSessions.deletedAt))).orderBy(desc(rangeSessions.startedAt)).limit(MAX_OPEN_LISTED),
			sessionRows().where(isNull(rangeSessions.deletedAt)).orderBy(desc(rangeSessions.startedAt)).limit(RECENT_LISTED)
		]).then(([open, recent]) => [...open, ...recent.filter((r) => r.status !== 'open')].slice(0, Math.max(RECENT_LISTED, open.length)))
	]);
	return {
		rigCount: rigCount?.n ?? 0,
		openSessionCount: openSessions?.n ?? 0,
		shotsThisWeek: shotsThisWeek?.n ?? 0,
		recentSessions
	};
}
