import { pgEnum, pgTable, primaryKey, text, timestamp } from 'drizzle-orm/pg-core'
import { ROLES } from '#shared/authz/permissions.ts'
import { users } from './auth.ts'

export const roleEnum = pgEnum('role', ROLES)

/** A user may hold several roles; one row per (user, role). */
export const userRoles = pgTable(
	'user_roles',
	{
		userId: text()
			.notNull()
			.references(() => users.id),
		role: roleEnum().notNull(),
		grantedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		grantedBy: text().references(() => users.id),
	},
	(table) => [primaryKey({ columns: [table.userId, table.role] })],
)
