import { eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { SYSTEM_ACTOR } from '#app/.server/services/audit.ts'
import { createUser } from '#app/.server/services/users.ts'
import type { Actor, Role } from '#shared/authz/permissions.ts'

export const TEST_PASSWORD = 'correct-horse-battery'

let sequence = 0

/** A real account (password TEST_PASSWORD) with the given roles, returned as the Actor the app would see. */
export async function makeActor(db: Db, ...roles: Array<Role>): Promise<Actor> {
	sequence += 1
	const email = `${roles.join('-') || 'nobody'}-${sequence}@lab.test`
	const name = `Test ${roles.join(' ')} ${sequence}`
	const outcome = await createUser(db, {
		actor: SYSTEM_ACTOR,
		values: { name, email, password: TEST_PASSWORD, roles: roles.length ? roles : ['author'], timeZone: 'UTC' },
		now: new Date(),
	})
	if (!outcome.ok) throw outcome.error
	return { id: outcome.value.id, name, email, roles }
}

/** The audit actions recorded for one entity, oldest first. */
export async function auditActionsFor(db: Db, entityId: string): Promise<Array<string>> {
	const rows = await db.select({ action: auditEvents.action }).from(auditEvents).where(eq(auditEvents.entityId, entityId)).orderBy(auditEvents.id)
	return rows.map((row) => row.action)
}
