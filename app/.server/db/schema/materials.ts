import { integer, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core'
import { users } from './auth.ts'

export const materials = pgTable('materials', {
	id: uuid().primaryKey().defaultRandom(),
	/** The lab's own item code, unique, e.g. 'RM-0142'. */
	code: text().notNull().unique(),
	name: text().notNull(),
	synonyms: text().array().notNull().default([]),
	/** CAS Registry Number with a valid check digit, or null for mixtures without one. */
	casNumber: text(),
	formula: text(),
	grade: text(),
	/** Incremented by every save; a save names the revision it edited (optimistic locking). */
	revision: integer().notNull().default(1),
	createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	createdBy: text().references(() => users.id),
	updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	updatedBy: text().references(() => users.id),
})
