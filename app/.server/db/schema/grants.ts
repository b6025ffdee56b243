import { boolean, index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core'
import { users } from './auth.ts'

/**
 * Time-boxed, read-only access of an inspector to chosen specifications (or all). Inside the window the inspector
 * sees the released versions (effective, superseded, retired), their dossiers and audit extracts; outside it,
 * nothing. Grants are never deleted: an administrator revokes them, and they end by themselves at `endsAt`.
 */
export const accessGrants = pgTable(
	'access_grants',
	{
		id: uuid().primaryKey().defaultRandom(),
		inspectorId: text()
			.notNull()
			.references(() => users.id),
		/** Who the inspector inspects for, printed on their copies, e.g. 'Regulatory inspection, 2026-12'. */
		purpose: text().notNull(),
		allSpecifications: boolean().notNull().default(false),
		specificationIds: uuid().array().notNull().default([]),
		startsAt: timestamp({ withTimezone: true }).notNull(),
		endsAt: timestamp({ withTimezone: true }).notNull(),
		grantedBy: text()
			.notNull()
			.references(() => users.id),
		grantedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		revokedAt: timestamp({ withTimezone: true }),
		revokedBy: text().references(() => users.id),
	},
	(table) => [index().on(table.inspectorId)],
)
