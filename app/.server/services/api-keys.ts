import { createHash, randomBytes } from 'node:crypto'
import { and, asc, desc, eq, isNull, lt, or } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { apiKeys } from '#app/.server/db/schema/api-keys.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { userRoles } from '#app/.server/db/schema/roles.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { type Actor, type ApiKeyScope, apiKeyScopesFor } from '#shared/authz/permissions.ts'
import { DomainError, err, Forbidden, NotFound, ok, type Result } from '#shared/errors.ts'

/** Every token starts with this, so that a leaked one is recognisable (e.g. by secret scanners). */
export const API_TOKEN_PREFIX = 'bp_'
/** How much of the token is kept in clear for display: 'bp_' and 8 hex digits. */
const DISPLAY_PREFIX_LENGTH = API_TOKEN_PREFIX.length + 8

const auditActor = (actor: Actor) => ({ id: actor.id, label: actor.email })

export function hashApiToken(token: string): string {
	return createHash('sha256').update(token, 'utf8').digest('hex')
}

/** Creates a key; the token is returned once, here, and only its hash is stored. */
export async function createApiKey(
	db: Db,
	input: { actor: Actor; name: string; scopes: ReadonlyArray<ApiKeyScope>; now: Date },
): Promise<Result<{ id: string; token: string; prefix: string }, DomainError>> {
	const allowed = apiKeyScopesFor(input.actor)
	const refused = input.scopes.filter((scope) => !allowed.includes(scope))
	if (refused.length > 0)
		return err(new Forbidden(`Your roles do not allow keys with the ${refused.join(', ')} scope.`))
	if (input.scopes.length === 0) return err(new DomainError('Choose at least one scope.', 400))
	// 32 random bytes: 256 bits, far beyond guessing; hex keeps the token safe in headers and shells.
	const token = `${API_TOKEN_PREFIX}${randomBytes(32).toString('hex')}`
	const prefix = token.slice(0, DISPLAY_PREFIX_LENGTH)
	const scopes = [...new Set(input.scopes)].sort()
	const id = await db.transaction(async (tx) => {
		const [row] = await tx
			.insert(apiKeys)
			.values({
				userId: input.actor.id,
				name: input.name,
				prefix,
				hash: hashApiToken(token),
				scopes,
				createdAt: input.now,
			})
			.returning({ id: apiKeys.id })
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'api-key.created',
			entityType: 'api-key',
			entityId: row!.id,
			after: { name: input.name, prefix, scopes },
			occurredAt: input.now,
		})
		return row!.id
	})
	return ok({ id, token, prefix })
}

/** Revokes one of the actor's own keys; revoking twice is refused. */
export async function revokeApiKey(
	db: Db,
	input: { actor: Actor; keyId: string; now: Date },
): Promise<Result<{ id: string }, DomainError>> {
	return db.transaction(async (tx) => {
		const [row] = await tx
			.update(apiKeys)
			.set({ revokedAt: input.now })
			.where(and(eq(apiKeys.id, input.keyId), eq(apiKeys.userId, input.actor.id), isNull(apiKeys.revokedAt)))
			.returning({ id: apiKeys.id, prefix: apiKeys.prefix, name: apiKeys.name })
		if (!row) return err(new NotFound('An active key of yours with that id'))
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'api-key.revoked',
			entityType: 'api-key',
			entityId: row.id,
			before: { name: row.name, prefix: row.prefix },
			occurredAt: input.now,
		})
		return ok({ id: row.id })
	})
}

/** The actor's keys, newest first, without their hashes. */
export async function listApiKeys(db: Db, userId: string) {
	const rows = await db
		.select({
			id: apiKeys.id,
			name: apiKeys.name,
			prefix: apiKeys.prefix,
			scopes: apiKeys.scopes,
			createdAt: apiKeys.createdAt,
			lastUsedAt: apiKeys.lastUsedAt,
			revokedAt: apiKeys.revokedAt,
		})
		.from(apiKeys)
		.where(eq(apiKeys.userId, userId))
		.orderBy(desc(apiKeys.createdAt))
	return rows.map((row) => ({
		...row,
		createdAt: row.createdAt.toISOString(),
		lastUsedAt: row.lastUsedAt?.toISOString() ?? null,
		revokedAt: row.revokedAt?.toISOString() ?? null,
	}))
}

export type ApiKeyResolution =
	| { status: 'ok'; actor: Actor; scopes: ReadonlyArray<ApiKeyScope>; keyId: string }
	| { status: 'unknown' | 'revoked' | 'deactivated' }

/** Resolves a presented token to its owner as the same Actor the app uses. Reads only: see `markApiKeyUsed`. */
export async function resolveApiKey(db: Db, token: string): Promise<ApiKeyResolution> {
	const [row] = await db
		.select({
			keyId: apiKeys.id,
			scopes: apiKeys.scopes,
			revokedAt: apiKeys.revokedAt,
			userId: users.id,
			name: users.name,
			email: users.email,
			deactivatedAt: users.deactivatedAt,
		})
		.from(apiKeys)
		.innerJoin(users, eq(users.id, apiKeys.userId))
		.where(eq(apiKeys.hash, hashApiToken(token)))
	if (!row) return { status: 'unknown' }
	if (row.revokedAt) return { status: 'revoked' }
	if (row.deactivatedAt) return { status: 'deactivated' }
	const roles = await db
		.select({ role: userRoles.role })
		.from(userRoles)
		.where(eq(userRoles.userId, row.userId))
		.orderBy(asc(userRoles.role))
	const actor: Actor = { id: row.userId, name: row.name, email: row.email, roles: roles.map((entry) => entry.role) }
	const scopes = row.scopes.filter((scope): scope is ApiKeyScope => scope === 'read' || scope === 'write')
	return { status: 'ok', actor, scopes, keyId: row.keyId }
}

/** "Last used" is kept to the minute: a busy script then writes once a minute, not once a request. */
export const LAST_USED_PRECISION_MS = 60_000

/** Notes the key's last use (after its request passed the rate limit); a no-op within a minute of the last note. */
export async function markApiKeyUsed(db: Db, keyId: string, now: Date): Promise<void> {
	await db
		.update(apiKeys)
		.set({ lastUsedAt: now })
		.where(
			and(
				eq(apiKeys.id, keyId),
				or(isNull(apiKeys.lastUsedAt), lt(apiKeys.lastUsedAt, new Date(now.getTime() - LAST_USED_PRECISION_MS))),
			),
		)
}
