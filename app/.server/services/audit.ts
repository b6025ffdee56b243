import type { Db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'

export type AuditActor = { id: string | null; label: string }

export type AuditEntry = {
	actor: AuditActor
	action: string
	entityType: string
	entityId?: string | null
	before?: Record<string, unknown> | null
	after?: Record<string, unknown> | null
	reason?: string | null
	ipAddress?: string | null
	occurredAt?: Date
}

/** The actor recorded for work the system does on its own (seeding, scheduled effective dates). */
export const SYSTEM_ACTOR: AuditActor = { id: null, label: 'system' }

/**
 * Appends one event to the audit trail. Call it with the same transaction as the change it records,
 * so that a change and its record are committed together or not at all.
 */
export async function recordAudit(db: Db, entry: AuditEntry): Promise<void> {
	await recordAuditEvents(db, [entry])
}

/**
 * Appends several events in one INSERT, chained in the order given: the chain trigger runs for each row in turn
 * and sees the rows before it (PostgreSQL docs, "Visibility of Data Changes": a row-level BEFORE trigger sees the
 * effects of rows previously processed by the same command).
 */
export async function recordAuditEvents(db: Db, entries: ReadonlyArray<AuditEntry>): Promise<void> {
	if (entries.length === 0) return
	await db.insert(auditEvents).values(
		entries.map((entry) => ({
			actorId: entry.actor.id,
			actorLabel: entry.actor.label,
			action: entry.action,
			entityType: entry.entityType,
			entityId: entry.entityId ?? null,
			before: entry.before ?? null,
			after: entry.after ?? null,
			reason: entry.reason ?? null,
			ipAddress: entry.ipAddress ?? null,
			occurredAt: entry.occurredAt ?? new Date(),
		})),
	)
}

/** Client address as seen by the server, from the proxy header when one is set. */
export function clientAddress(request: Request): string | null {
	const forwarded = request.headers.get('x-forwarded-for')
	return forwarded ? (forwarded.split(',')[0]?.trim() ?? null) : null
}
