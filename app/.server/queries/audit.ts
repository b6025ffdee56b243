import { and, asc, count, desc, eq, gte, ilike, lt, type SQL } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'

export const AuditQuerySchema = z.object({
	actor: z.string().trim().max(200).optional().catch(undefined),
	action: z.string().trim().max(100).optional().catch(undefined),
	entityType: z.string().trim().max(100).optional().catch(undefined),
	entityId: z.string().trim().max(100).optional().catch(undefined),
	since: z.iso.date().optional().catch(undefined),
	until: z.iso.date().optional().catch(undefined),
	page: z.coerce.number().int().min(1).max(100_000).catch(1),
})
export type AuditQuery = z.infer<typeof AuditQuerySchema>

export const AUDIT_PAGE_SIZE = 50

function auditFilters(query: AuditQuery): SQL | undefined {
	const filters: Array<SQL> = []
	if (query.actor) filters.push(ilike(auditEvents.actorLabel, `%${query.actor.replace(/[\\%_]/g, (c) => `\\${c}`)}%`))
	if (query.action) filters.push(ilike(auditEvents.action, `${query.action.replace(/[\\%_]/g, (c) => `\\${c}`)}%`))
	if (query.entityType) filters.push(eq(auditEvents.entityType, query.entityType))
	if (query.entityId) filters.push(eq(auditEvents.entityId, query.entityId))
	if (query.since) filters.push(gte(auditEvents.occurredAt, new Date(`${query.since}T00:00:00Z`)))
	if (query.until)
		filters.push(lt(auditEvents.occurredAt, new Date(new Date(`${query.until}T00:00:00Z`).getTime() + 86_400_000)))
	return filters.length ? and(...filters) : undefined
}

/** Every event matching the filters, oldest first (the CSV export; capped for safety). */
export async function listAuditEventsForExport(db: Db, query: AuditQuery) {
	return db.select().from(auditEvents).where(auditFilters(query)).orderBy(asc(auditEvents.id)).limit(100_000)
}

/** Newest events first, filtered by actor (e-mail fragment), action prefix, entity and dates. */
export async function listAuditEvents(db: Db, query: AuditQuery) {
	const where = auditFilters(query)
	const [rows, totals] = await Promise.all([
		db
			.select()
			.from(auditEvents)
			.where(where)
			.orderBy(desc(auditEvents.id))
			.limit(AUDIT_PAGE_SIZE)
			.offset((query.page - 1) * AUDIT_PAGE_SIZE),
		db.select({ total: count() }).from(auditEvents).where(where),
	])
	const total = totals[0]?.total ?? 0
	return {
		rows: rows.map((row) => ({
			id: row.id,
			occurredAt: row.occurredAt.toISOString(),
			actorLabel: row.actorLabel,
			action: row.action,
			entityType: row.entityType,
			entityId: row.entityId,
			before: row.before,
			after: row.after,
			reason: row.reason,
		})),
		total,
		pageCount: Math.max(1, Math.ceil(total / AUDIT_PAGE_SIZE)),
	}
}
