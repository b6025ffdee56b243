import { and, count, desc, eq, ilike, type SQL } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'

export const AuditQuerySchema = z.object({
	actor: z.string().trim().max(200).optional().catch(undefined),
	action: z.string().trim().max(100).optional().catch(undefined),
	entityType: z.string().trim().max(100).optional().catch(undefined),
	page: z.coerce.number().int().min(1).max(100_000).catch(1),
})
export type AuditQuery = z.infer<typeof AuditQuerySchema>

export const AUDIT_PAGE_SIZE = 50

/** Newest events first, filtered by actor (e-mail fragment), action prefix and entity type. */
export async function listAuditEvents(db: Db, query: AuditQuery) {
	const filters: Array<SQL> = []
	if (query.actor) filters.push(ilike(auditEvents.actorLabel, `%${query.actor.replace(/[\\%_]/g, (c) => `\\${c}`)}%`))
	if (query.action) filters.push(ilike(auditEvents.action, `${query.action.replace(/[\\%_]/g, (c) => `\\${c}`)}%`))
	if (query.entityType) filters.push(eq(auditEvents.entityType, query.entityType))
	const where = filters.length ? and(...filters) : undefined
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
