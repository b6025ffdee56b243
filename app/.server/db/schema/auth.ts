import { boolean, index, integer, pgTable, text, timestamp } from 'drizzle-orm/pg-core'

// The four tables better-auth needs (fields from `getAuthTables()` of better-auth 1.7), written by hand
// because its schema CLI does not run on Node 20. Columns after the marked line are ours.
export const users = pgTable('users', {
	id: text().primaryKey(),
	name: text().notNull(),
	email: text().notNull().unique(),
	emailVerified: boolean().notNull().default(false),
	image: text(),
	createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	// --- ours ---
	/** Accounts are never deleted (their names stay on records); they are deactivated. */
	deactivatedAt: timestamp({ withTimezone: true }),
	failedSignIns: integer().notNull().default(0),
	lockedUntil: timestamp({ withTimezone: true }),
	/** IANA zone used to show this user's signature times, e.g. 'Europe/Dublin'. */
	timeZone: text().notNull().default('UTC'),
})

export const sessions = pgTable(
	'sessions',
	{
		id: text().primaryKey(),
		expiresAt: timestamp({ withTimezone: true }).notNull(),
		token: text().notNull().unique(),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		ipAddress: text(),
		userAgent: text(),
		userId: text()
			.notNull()
			.references(() => users.id),
	},
	(table) => [index().on(table.userId)],
)

export const accounts = pgTable(
	'accounts',
	{
		id: text().primaryKey(),
		accountId: text().notNull(),
		providerId: text().notNull(),
		userId: text()
			.notNull()
			.references(() => users.id),
		accessToken: text(),
		refreshToken: text(),
		idToken: text(),
		accessTokenExpiresAt: timestamp({ withTimezone: true }),
		refreshTokenExpiresAt: timestamp({ withTimezone: true }),
		scope: text(),
		password: text(),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	},
	(table) => [index().on(table.userId)],
)

export const verifications = pgTable('verifications', {
	id: text().primaryKey(),
	identifier: text().notNull(),
	value: text().notNull(),
	expiresAt: timestamp({ withTimezone: true }).notNull(),
	createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
})
