import { APIError } from 'better-auth/api'
import { and, eq } from 'drizzle-orm'
import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { auth } from '#app/.server/auth.ts'
import { actorContext, authorize, resolveActor } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { sessions, users } from '#app/.server/db/schema/auth.ts'
import { deactivateUser, setUserRoles } from '#app/.server/services/users.ts'
import { makeActor, TEST_PASSWORD } from '#tests/support/factories.ts'

process.env.BETTER_AUTH_URL ??= 'http://localhost:3999'

async function signIn(email: string, password: string) {
	try {
		const { headers } = await auth().api.signInEmail({
			body: { email, password },
			headers: new Headers(),
			returnHeaders: true,
		})
		const cookie = headers.get('set-cookie')?.split(';')[0] ?? ''
		return { ok: true as const, cookie }
	} catch (error) {
		if (error instanceof APIError)
			return { ok: false as const, status: error.statusCode, message: error.body?.message ?? '' }
		throw error
	}
}

async function actions(entityId: string) {
	const rows = await db.select().from(auditEvents).where(eq(auditEvents.entityId, entityId)).orderBy(auditEvents.id)
	return rows.map((row) => row.action)
}

test('[AUTH-011] a good password signs in, resolves to the actor with roles, and is audited', async () => {
	const author = await makeActor(db, 'author', 'reviewer')
	const result = await signIn(author.email, TEST_PASSWORD)
	expect(result.ok).toBe(true)
	const request = new Request('http://localhost:3999/', { headers: { cookie: result.ok ? result.cookie : '' } })
	const actor = await resolveActor(request)
	expect(actor).toMatchObject({ id: author.id, email: author.email, roles: ['author', 'reviewer'] })
	expect(await actions(author.id)).toEqual(['user.created', 'user.signed-in'])
})

test('[AUTH-012] five wrong passwords lock the account; the right one is then refused and every attempt is audited', async () => {
	const user = await makeActor(db, 'author')
	for (let attempt = 1; attempt <= 4; attempt++) {
		expect(await signIn(user.email, 'wrong-password')).toMatchObject({ ok: false, status: 401 })
	}
	const [beforeLock] = await db.select().from(users).where(eq(users.id, user.id))
	expect(beforeLock?.lockedUntil).toBeNull()
	expect(await signIn(user.email, 'wrong-password')).toMatchObject({ ok: false, status: 401 })
	const refused = await signIn(user.email, TEST_PASSWORD)
	expect(refused).toMatchObject({ ok: false, status: 403 })
	expect(refused.ok ? '' : refused.message).toContain('locked')
	const recorded = await actions(user.id)
	expect(recorded.filter((action) => action === 'user.sign-in-failed')).toHaveLength(5)
	expect(recorded).toContain('user.locked')
	expect(recorded.at(-1)).toBe('user.sign-in-refused')
	const sessionRows = await db.select().from(sessions).where(eq(sessions.userId, user.id))
	expect(sessionRows).toHaveLength(0)
})

test('[AUTH-013] a lock that has run out lets the right password in and resets the count', async () => {
	const user = await makeActor(db, 'author')
	await db
		.update(users)
		.set({ failedSignIns: 5, lockedUntil: new Date(Date.now() - 1000) })
		.where(eq(users.id, user.id))
	expect((await signIn(user.email, TEST_PASSWORD)).ok).toBe(true)
	const [after] = await db.select().from(users).where(eq(users.id, user.id))
	expect(after).toMatchObject({ failedSignIns: 0, lockedUntil: null })
})

test('[AUTH-014] a deactivated account cannot sign in and its open sessions end at once', async () => {
	const admin = await makeActor(db, 'admin')
	const user = await makeActor(db, 'reviewer')
	const signedIn = await signIn(user.email, TEST_PASSWORD)
	expect(signedIn.ok).toBe(true)
	const outcome = await deactivateUser(db, {
		actor: admin,
		userId: user.id,
		reason: 'Left the company',
		now: new Date(),
	})
	expect(outcome.ok).toBe(true)
	const request = new Request('http://localhost:3999/', { headers: { cookie: signedIn.ok ? signedIn.cookie : '' } })
	expect(await resolveActor(request)).toBeNull()
	expect(await signIn(user.email, TEST_PASSWORD)).toMatchObject({ ok: false, status: 403 })
	const [row] = await db.select().from(users).where(eq(users.id, user.id))
	expect(row?.deactivatedAt).not.toBeNull()
	expect(await actions(user.id)).toContain('user.deactivated')
})

test('[AUTH-015] an idle session expires: past its expiry it no longer resolves', async () => {
	const user = await makeActor(db, 'author')
	const signedIn = await signIn(user.email, TEST_PASSWORD)
	const request = () =>
		new Request('http://localhost:3999/', { headers: { cookie: signedIn.ok ? signedIn.cookie : '' } })
	const [session] = await db.select().from(sessions).where(eq(sessions.userId, user.id))
	// Idle expiry: 30 minutes by default (SESSION_IDLE_MINUTES; common practice, no source).
	const minutes = (session!.expiresAt.getTime() - session!.createdAt.getTime()) / 60_000
	expect(minutes).toBeCloseTo(30, 0)
	expect(await resolveActor(request())).not.toBeNull()
	await db
		.update(sessions)
		.set({ expiresAt: new Date(Date.now() - 1000) })
		.where(eq(sessions.userId, user.id))
	expect(await resolveActor(request())).toBeNull()
})

test('[AUTH-016] authorize answers 403 on the server for a role without the permission', async () => {
	const inspector = await makeActor(db, 'inspector')
	const context = new RouterContextProvider()
	context.set(actorContext, inspector)
	expect(() => authorize(context, 'user:manage')).toThrow()
	try {
		authorize(context, 'user:manage')
	} catch (thrown) {
		expect(thrown).toMatchObject({ init: { status: 403 } })
	}
	expect(authorize(context, 'inspection:read').id).toBe(inspector.id)
})

test('[AUTH-017] role changes are audited with the roles before and after; an admin cannot drop their own admin role', async () => {
	const admin = await makeActor(db, 'admin')
	const user = await makeActor(db, 'author')
	const changed = await setUserRoles(db, {
		actor: admin,
		userId: user.id,
		roles: ['author', 'reviewer'],
		now: new Date(),
	})
	expect(changed).toEqual({ ok: true, value: { changed: true } })
	const [event] = await db
		.select()
		.from(auditEvents)
		.where(and(eq(auditEvents.entityId, user.id), eq(auditEvents.action, 'user.roles-changed')))
	expect(event).toMatchObject({
		actorLabel: admin.email,
		before: { roles: ['author'] },
		after: { roles: ['author', 'reviewer'] },
	})
	const selfDemotion = await setUserRoles(db, { actor: admin, userId: admin.id, roles: ['author'], now: new Date() })
	expect(selfDemotion.ok).toBe(false)
})

test('[AUTH-020] a sign-in request without an e-mail address is refused and puts no failed sign-in on record', async () => {
	const before = await db
		.select({ id: auditEvents.id })
		.from(auditEvents)
		.where(eq(auditEvents.action, 'user.sign-in-failed'))
	const refused = await auth().handler(
		new Request('http://localhost:3999/api/auth/sign-in/email', {
			method: 'POST',
			headers: { 'Content-Type': 'application/json', Origin: 'http://localhost:3999' },
			body: '{}',
		}),
	)
	expect(refused.status).toBeGreaterThanOrEqual(400)
	expect(refused.status).toBeLessThan(500)
	const after = await db
		.select({ id: auditEvents.id })
		.from(auditEvents)
		.where(eq(auditEvents.action, 'user.sign-in-failed'))
	expect(after).toHaveLength(before.length)
})
