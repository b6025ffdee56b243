import { sql } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'

export type ChainBreak = { eventId: number; problem: string }

/**
 * Walks the audit trail's hash chain in the database (function audit_chain_breaks, migration 0003) and
 * returns every event whose link or own hash does not match, with the number of events checked.
 */
export async function verifyAuditChain(db: Db): Promise<{ checked: number; breaks: Array<ChainBreak> }> {
	const breaks = await db.execute<{ event_id: string; problem: string }>(
		sql`select event_id, problem from audit_chain_breaks()`,
	)
	const [counted] = await db.execute<{ n: string }>(sql`select count(*)::text as n from audit_events`)
	return {
		checked: Number(counted?.n ?? 0),
		breaks: breaks.map((row) => ({ eventId: Number(row.event_id), problem: row.problem })),
	}
}
