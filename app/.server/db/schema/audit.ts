import { bigserial, index, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core'
import { users } from './auth.ts'

/**
 * Append-only record of who did what and when. A trigger (hand-written migration) rejects UPDATE and
 * DELETE, so not even the application can rewrite history.
 */
export const auditEvents = pgTable(
	'audit_events',
	{
		id: bigserial({ mode: 'number' }).primaryKey(),
		occurredAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		/** null for events without a known user (e.g. a failed sign-in for an unknown e-mail). */
		actorId: text().references(() => users.id),
		/** The e-mail or label of the actor at the time, kept even if the account changes. */
		actorLabel: text().notNull(),
		/** '<entity>.<past-verb>', e.g. 'material.created', 'user.signed-in'. */
		action: text().notNull(),
		entityType: text().notNull(),
		entityId: text(),
		before: jsonb(),
		after: jsonb(),
		reason: text(),
		ipAddress: text(),
		/** Hash of the previous event and this one's own hash, computed by a trigger (see migration 0003). */
		prevHash: text(),
		hash: text(),
	},
	(table) => [index().on(table.occurredAt), index().on(table.entityType, table.entityId), index().on(table.actorId)],
)
