import { index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core'
import { users } from './auth.ts'

/**
 * Personal API keys. The token is shown once at creation; only its SHA-256 is kept, with a short prefix so
 * that the owner can tell keys apart. Keys are never deleted: they are revoked.
 */
export const apiKeys = pgTable(
	'api_keys',
	{
		id: uuid().primaryKey().defaultRandom(),
		userId: text()
			.notNull()
			.references(() => users.id),
		name: text().notNull(),
		/** The first characters of the token, e.g. 'bp_3f9a1c', shown in lists. */
		prefix: text().notNull(),
		/** SHA-256 (hex) of the whole token. */
		hash: text().notNull().unique(),
		/** Subset of API_KEY_SCOPES. */
		scopes: text().array().notNull(),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		lastUsedAt: timestamp({ withTimezone: true }),
		revokedAt: timestamp({ withTimezone: true }),
	},
	(table) => [index().on(table.userId)],
)
