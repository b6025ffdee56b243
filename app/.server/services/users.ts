import { hashPassword } from 'better-auth/crypto'
import { eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { accounts, sessions, users } from '#app/.server/db/schema/auth.ts'
import { userRoles } from '#app/.server/db/schema/roles.ts'
import { type AuditActor, recordAudit } from '#app/.server/services/audit.ts'
import type { Actor, Role } from '#shared/authz/permissions.ts'
import type { CreateUserValues } from '#shared/authz/user-schema.ts'
import { Conflict, type DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'

function auditActor(actor: Actor | AuditActor): AuditActor {
	return 'roles' in actor ? { id: actor.id, label: actor.email } : actor
}

/**
 * Creates a personal account with an initial password and its roles. Sign-up is closed, so this is the
 * only way in (21 CFR 11.10(d), 11.100(a): unique accounts, limited access).
 */
export async function createUser(
	db: Db,
	input: { actor: Actor | AuditActor; values: CreateUserValues; now: Date },
): Promise<Result<{ id: string }, DomainError>> {
	const passwordHash = await hashPassword(input.values.password)
	return db.transaction(async (tx) => {
		const [existing] = await tx.select({ id: users.id }).from(users).where(eq(users.email, input.values.email))
		if (existing) return err(new Conflict(`An account for ${input.values.email} already exists.`))
		const id = crypto.randomUUID()
		await tx.insert(users).values({
			id,
			name: input.values.name,
			email: input.values.email,
			emailVerified: true,
			timeZone: input.values.timeZone,
			createdAt: input.now,
			updatedAt: input.now,
		})
		await tx.insert(accounts).values({
			id: crypto.randomUUID(),
			accountId: id,
			providerId: 'credential',
			userId: id,
			password: passwordHash,
			createdAt: input.now,
			updatedAt: input.now,
		})
		const grantedBy = auditActor(input.actor).id
		await tx
			.insert(userRoles)
			.values(input.values.roles.map((role) => ({ userId: id, role, grantedBy, grantedAt: input.now })))
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'user.created',
			entityType: 'user',
			entityId: id,
			after: {
				name: input.values.name,
				email: input.values.email,
				roles: [...input.values.roles].sort(),
				timeZone: input.values.timeZone,
			},
			occurredAt: input.now,
		})
		return ok({ id })
	})
}

/** Replaces a user's roles; an administrator cannot take the admin role from themselves. */
export async function setUserRoles(
	db: Db,
	input: { actor: Actor; userId: string; roles: ReadonlyArray<Role>; now: Date },
): Promise<Result<{ changed: boolean }, DomainError>> {
	return db.transaction(async (tx) => {
		const [user] = await tx.select().from(users).where(eq(users.id, input.userId)).for('update')
		if (!user) return err(new NotFound('The account'))
		if (input.userId === input.actor.id && !input.roles.includes('admin')) {
			return err(new Conflict('You cannot remove your own administrator role. Ask another administrator.'))
		}
		const before = (await tx.select({ role: userRoles.role }).from(userRoles).where(eq(userRoles.userId, input.userId)))
			.map((row) => row.role)
			.sort()
		const after = [...new Set(input.roles)].sort()
		if (before.join(',') === after.join(',')) return ok({ changed: false })
		await tx.delete(userRoles).where(eq(userRoles.userId, input.userId))
		await tx
			.insert(userRoles)
			.values(after.map((role) => ({ userId: input.userId, role, grantedBy: input.actor.id, grantedAt: input.now })))
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'user.roles-changed',
			entityType: 'user',
			entityId: input.userId,
			before: { roles: before },
			after: { roles: after },
			occurredAt: input.now,
		})
		return ok({ changed: true })
	})
}

/** Deactivates an account (never deleted: the name stays on records) and ends its sessions at once. */
export async function deactivateUser(
	db: Db,
	input: { actor: Actor; userId: string; reason: string; now: Date },
): Promise<Result<true, DomainError>> {
	if (input.userId === input.actor.id) return err(new Conflict('You cannot deactivate your own account.'))
	return db.transaction(async (tx) => {
		const [user] = await tx
			.update(users)
			.set({ deactivatedAt: input.now, updatedAt: input.now })
			.where(eq(users.id, input.userId))
			.returning()
		if (!user) return err(new NotFound('The account'))
		await tx.delete(sessions).where(eq(sessions.userId, input.userId))
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'user.deactivated',
			entityType: 'user',
			entityId: input.userId,
			after: { deactivatedAt: input.now.toISOString() },
			reason: input.reason,
			occurredAt: input.now,
		})
		return ok(true)
	})
}

/** Gives a deactivated account access again. */
export async function reactivateUser(
	db: Db,
	input: { actor: Actor; userId: string; now: Date },
): Promise<Result<true, DomainError>> {
	return db.transaction(async (tx) => {
		const [user] = await tx
			.update(users)
			.set({ deactivatedAt: null, failedSignIns: 0, lockedUntil: null, updatedAt: input.now })
			.where(eq(users.id, input.userId))
			.returning()
		if (!user) return err(new NotFound('The account'))
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'user.reactivated',
			entityType: 'user',
			entityId: input.userId,
			occurredAt: input.now,
		})
		return ok(true)
	})
}

/** Lifts a lock-out before it runs out. */
export async function unlockUser(
	db: Db,
	input: { actor: Actor; userId: string; now: Date },
): Promise<Result<true, DomainError>> {
	return db.transaction(async (tx) => {
		const [user] = await tx
			.update(users)
			.set({ failedSignIns: 0, lockedUntil: null, updatedAt: input.now })
			.where(eq(users.id, input.userId))
			.returning()
		if (!user) return err(new NotFound('The account'))
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'user.unlocked',
			entityType: 'user',
			entityId: input.userId,
			occurredAt: input.now,
		})
		return ok(true)
	})
}
