import { betterAuth } from 'better-auth'
import { drizzleAdapter } from 'better-auth/adapters/drizzle'
import { APIError, createAuthMiddleware } from 'better-auth/api'
import { verifyPassword } from 'better-auth/crypto'
import { and, eq, sql } from 'drizzle-orm'
import { z } from 'zod'
import { db } from '#app/.server/db/client.ts'
import { accounts, sessions, users, verifications } from '#app/.server/db/schema/auth.ts'
import { env } from '#app/.server/env.ts'
import { loopbackTwins } from '#app/.server/security/origin.ts'
import { signInSucceeded, takeSignInAttempt } from '#app/.server/security/sign-in-limits.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { decideSignInGate, lockUntilAfterFailure } from '#shared/authz/sign-in-gate.ts'
import { DomainError, err, ok, type Result } from '#shared/errors.ts'

const DEVELOPMENT_SECRET = 'bandproof-development-secret-not-for-production-use'

function createAuth() {
	const settings = env()
	const secret = settings.BETTER_AUTH_SECRET ?? DEVELOPMENT_SECRET
	if (settings.NODE_ENV === 'production' && secret === DEVELOPMENT_SECRET && !process.env.BANDPROOF_DEMO) {
		throw new Error('Set BETTER_AUTH_SECRET (32 characters or more) before running in production')
	}
	return betterAuth({
		secret,
		baseURL: settings.BETTER_AUTH_URL,
		trustedOrigins: settings.BETTER_AUTH_URL ? loopbackTwins(settings.BETTER_AUTH_URL) : [],
		database: drizzleAdapter(db, {
			provider: 'pg',
			schema: { user: users, session: sessions, account: accounts, verification: verifications },
		}),
		emailAndPassword: {
			enabled: true,
			// Accounts are created by an administrator, never by self-service (21 CFR 11.10(d): limited access).
			disableSignUp: true,
			minPasswordLength: 10,
		},
		session: {
			// Idle expiry: a session lasts SESSION_IDLE_MINUTES after its last refresh; activity refreshes it.
			expiresIn: settings.SESSION_IDLE_MINUTES * 60,
			updateAge: 60,
			cookieCache: { enabled: false },
		},
		advanced: { cookiePrefix: 'bandproof' },
		rateLimit: { enabled: false },
		logger: { disabled: settings.NODE_ENV === 'test' },
		hooks: {
			before: createAuthMiddleware(async (ctx) => {
				if (ctx.path !== '/sign-in/email') return
				const email = String((ctx.body as { email?: unknown } | undefined)?.email ?? '').toLowerCase()
				const now = new Date()
				// Rate limits per client address and per e-mail, before anything touches the database (sign-in-limits.ts).
				const attempt = takeSignInAttempt(email, ctx.headers, now.getTime())
				if (!attempt.allowed) {
					const retryAfter = String(attempt.retryAfterSeconds)
					throw new APIError(
						'TOO_MANY_REQUESTS',
						{ message: attempt.message, code: 'RATE_LIMITED', retryAfterSeconds: attempt.retryAfterSeconds },
						{ 'Retry-After': retryAfter },
					)
				}
				const [user] = await db.select().from(users).where(eq(users.email, email))
				if (user?.lockedUntil && user.lockedUntil <= now) {
					// A lock that has run out starts the count afresh.
					await db.update(users).set({ failedSignIns: 0, lockedUntil: null }).where(eq(users.id, user.id))
				}
				const gate = decideSignInGate(user ?? null, now)
				if (!gate.ok) {
					await recordAudit(db, {
						actor: { id: user?.id ?? null, label: email },
						action: 'user.sign-in-refused',
						entityType: 'user',
						entityId: user?.id ?? null,
						reason: gate.error,
						ipAddress: ctx.headers?.get('x-forwarded-for') ?? null,
					})
					throw new APIError('FORBIDDEN', { message: gate.error, code: 'ACCOUNT_BLOCKED' })
				}
			}),
			after: createAuthMiddleware(async (ctx) => {
				if (ctx.path !== '/sign-in/email') return
				const email = String((ctx.body as { email?: unknown } | undefined)?.email ?? '').toLowerCase()
				const ipAddress = ctx.headers?.get('x-forwarded-for') ?? null
				const newSession = ctx.context.newSession
				if (newSession) {
					signInSucceeded(email, ctx.headers)
					await db.update(users).set({ failedSignIns: 0, lockedUntil: null }).where(eq(users.id, newSession.user.id))
					await recordAudit(db, {
						actor: { id: newSession.user.id, label: newSession.user.email },
						action: 'user.signed-in',
						entityType: 'user',
						entityId: newSession.user.id,
						ipAddress,
					})
					return
				}
				const returned = ctx.context.returned
				const refusedBeforeTrying =
					returned instanceof APIError && ['ACCOUNT_BLOCKED', 'RATE_LIMITED'].includes(returned.body?.code ?? '')
				if (refusedBeforeTrying) return
				// A request without an e-mail address at all is a malformed request, not a sign-in attempt on anyone.
				if (!z.email().safeParse(email).success) return
				await recordFailedSignIn(email, ipAddress)
			}),
		},
	})
}

/**
 * Re-authentication for an electronic signature (21 CFR 11.200(a)(1)): the signer types their password again.
 * A wrong password counts toward lock-out exactly like a failed sign-in; a locked or deactivated account
 * cannot sign.
 */
export async function reauthenticate(userId: string, password: string): Promise<Result<true, DomainError>> {
	const [found] = await db.select().from(users).where(eq(users.id, userId))
	if (!found) return err(new DomainError('Your account was not found.', 401))
	const now = new Date()
	let user = found
	if (user.lockedUntil && user.lockedUntil <= now) {
		// A lock that has run out starts the count afresh, as at sign-in.
		await db.update(users).set({ failedSignIns: 0, lockedUntil: null }).where(eq(users.id, userId))
		user = { ...user, failedSignIns: 0, lockedUntil: null }
	}
	const gate = decideSignInGate(user, now)
	if (!gate.ok) return err(new DomainError(gate.error, 403))
	const [account] = await db
		.select({ password: accounts.password })
		.from(accounts)
		.where(and(eq(accounts.userId, userId), eq(accounts.providerId, 'credential')))
	const matches = account?.password ? await verifyPassword({ hash: account.password, password }) : false
	if (!matches) {
		await recordFailedSignIn(user.email, null, 'signature')
		return err(
			new DomainError('The password is not right; nothing was signed. Repeated failures lock your account.', 401),
		)
	}
	if (user.failedSignIns > 0) await db.update(users).set({ failedSignIns: 0 }).where(eq(users.id, userId))
	return ok(true)
}

/** Counts a failed password against the account and locks it at the threshold. */
async function recordFailedSignIn(
	email: string,
	ipAddress: string | null,
	during: 'sign-in' | 'signature' = 'sign-in',
): Promise<void> {
	const settings = env()
	await db.transaction(async (tx) => {
		const [user] = await tx
			.update(users)
			.set({ failedSignIns: sql`${users.failedSignIns} + 1` })
			.where(eq(users.email, email))
			.returning()
		let lockedUntil: Date | null = null
		if (user) {
			lockedUntil = lockUntilAfterFailure(user.failedSignIns, new Date(), {
				threshold: settings.LOCKOUT_THRESHOLD,
				minutes: settings.LOCKOUT_MINUTES,
			})
			if (lockedUntil) await tx.update(users).set({ lockedUntil }).where(eq(users.id, user.id))
		}
		await recordAudit(tx, {
			actor: { id: user?.id ?? null, label: email },
			action: 'user.sign-in-failed',
			entityType: 'user',
			entityId: user?.id ?? null,
			after: user
				? { failedSignIns: user.failedSignIns, lockedUntil: lockedUntil?.toISOString() ?? null, during }
				: { during },
			ipAddress,
		})
		if (user && lockedUntil) {
			await recordAudit(tx, {
				actor: { id: null, label: 'system' },
				action: 'user.locked',
				entityType: 'user',
				entityId: user.id,
				after: { lockedUntil: lockedUntil.toISOString() },
				reason: `${user.failedSignIns} consecutive failed sign-ins`,
			})
		}
	})
}

type Auth = ReturnType<typeof createAuth>
let instance: Auth | null = null

/** The better-auth instance, created on first use (after the environment is known). */
export function auth(): Auth {
	instance ??= createAuth()
	return instance
}
