import { asc, eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { userRoles } from '#app/.server/db/schema/roles.ts'
import type { Role } from '#shared/authz/permissions.ts'

export type UserStatus = 'active' | 'locked' | 'deactivated'

function statusOf(user: { deactivatedAt: Date | null; lockedUntil: Date | null }, now: Date): UserStatus {
	if (user.deactivatedAt) return 'deactivated'
	if (user.lockedUntil && user.lockedUntil > now) return 'locked'
	return 'active'
}

/** Every account with its roles and status, for the administration page. */
export async function listUsers(db: Db, now: Date) {
	const rows = await db.select().from(users).orderBy(asc(users.name))
	const roles = await db.select().from(userRoles)
	return rows.map((user) => ({
		id: user.id,
		name: user.name,
		email: user.email,
		roles: roles
			.filter((row) => row.userId === user.id)
			.map((row) => row.role as Role)
			.sort(),
		status: statusOf(user, now),
		lockedUntil: user.lockedUntil?.toISOString() ?? null,
	}))
}

/** One account for its administration page, or null. */
export async function getUser(db: Db, id: string, now: Date) {
	const [user] = await db.select().from(users).where(eq(users.id, id))
	if (!user) return null
	const roles = await db.select({ role: userRoles.role }).from(userRoles).where(eq(userRoles.userId, id))
	return {
		id: user.id,
		name: user.name,
		email: user.email,
		timeZone: user.timeZone,
		roles: roles.map((row) => row.role).sort(),
		status: statusOf(user, now),
		failedSignIns: user.failedSignIns,
		lockedUntil: user.lockedUntil?.toISOString() ?? null,
		deactivatedAt: user.deactivatedAt?.toISOString() ?? null,
		createdAt: user.createdAt.toISOString(),
	}
}
