import { eq } from 'drizzle-orm'
import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { auth } from '#app/.server/auth.ts'
import { actorContext } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { apiKeys } from '#app/.server/db/schema/api-keys.ts'
import { sessions } from '#app/.server/db/schema/auth.ts'
import { listQueue } from '#app/.server/queries/queue.ts'
import { middleware } from '#app/routes/_app/layout.tsx'
import { loader as queueCountLoader } from '#app/routes/queue.count.ts'
import { action as apiKeysAction } from '#app/routes/settings/api-keys.tsx'
import type { Actor } from '#shared/authz/permissions.ts'
import { QueueCountSchema } from '#shared/queue/queue-count.ts'
import { makeActor, makeSubmittableDraft, takeStep, TEST_PASSWORD } from '#tests/support/factories.ts'

process.env.BETTER_AUTH_URL ??= 'http://localhost:3999'
const ORIGIN = 'http://localhost:3999'

async function sessionCookie(actor: Actor): Promise<string> {
	const { headers } = await auth().api.signInEmail({
		body: { email: actor.email, password: TEST_PASSWORD },
		headers: new Headers(),
		returnHeaders: true,
	})
	return headers.get('set-cookie')?.split(';')[0] ?? ''
}

type Outcome = { passed: true; context: RouterContextProvider } | { passed: false; thrown: unknown }

/**
 * Runs the signed-in layout's middleware as React Router does, with the matched route's pattern (on the server React
 * Router joins the route paths without a leading slash: "settings/api-keys", as logged from the production build);
 * reports whether the request reached the route (next() called) or what was thrown instead.
 */
async function throughLayout(request: Request, pattern: string): Promise<Outcome> {
	const context = new RouterContextProvider()
	let reached = false
	try {
		await middleware[0]!({ request, context, params: {}, pattern, url: new URL(request.url) } as never, async () => {
			reached = true
			return new Response(null)
		})
	} catch (thrown) {
		return { passed: false, thrown }
	}
	return reached ? { passed: true, context } : { passed: false, thrown: null }
}

function post(path: string, cookie: string, fields: Record<string, string | Array<string>>): Request {
	const body = new FormData()
	for (const [name, value] of Object.entries(fields)) for (const item of [value].flat()) body.append(name, item)
	return new Request(`${ORIGIN}${path}`, { method: 'POST', headers: { cookie, origin: ORIGIN }, body })
}

const statusOf = (thrown: unknown) => (thrown as { init?: { status?: number } }).init?.status

test('[AUTHZ-010] an inspector-only account may POST to the API-key settings and to nothing else in the layout', async () => {
	const inspector = await makeActor(db, 'inspector')
	const cookie = await sessionCookie(inspector)
	const refused = await throughLayout(post('/materials/new', cookie, { code: 'RM-X1', name: 'X' }), 'materials/new')
	expect(refused.passed).toBe(false)
	expect(statusOf(!refused.passed && refused.thrown)).toBe(403)
	// A request that claims the settings path but matched another route gets no exception: the pattern decides.
	const elsewhere = await throughLayout(post('/settings/api-keys', cookie, {}), 'admin/users/new')
	expect(statusOf(!elsewhere.passed && elsewhere.thrown)).toBe(403)

	const create = post('/settings/api-keys', cookie, { intent: 'create', name: 'Audit script', scopes: 'read' })
	const allowed = await throughLayout(create, 'settings/api-keys')
	expect(allowed.passed).toBe(true)
	if (!allowed.passed) return
	expect(allowed.context.get(actorContext)?.id).toBe(inspector.id)
	const created = await apiKeysAction({ request: create, context: allowed.context, params: {} } as never)
	expect((created as { data: { created: { token: string } } }).data.created.token).toMatch(/^bp_[0-9a-f]{64}$/)

	// The exception does not widen what the page allows: an inspector still cannot give a key the write scope.
	const widen = post('/settings/api-keys', cookie, { intent: 'create', name: 'Uploader', scopes: ['read', 'write'] })
	const widenOutcome = await throughLayout(widen, 'settings/api-keys')
	if (!widenOutcome.passed) throw new Error('the layout refused the settings page')
	const refusedWrite = await apiKeysAction({ request: widen, context: widenOutcome.context, params: {} } as never)
	expect((refusedWrite as { init: { status: number } }).init.status).toBeGreaterThanOrEqual(400)
	const stored = await db.select().from(apiKeys).where(eq(apiKeys.userId, inspector.id))
	expect(stored.map((key) => [key.name, key.scopes])).toEqual([['Audit script', ['read']]])

	const revoke = post('/settings/api-keys', cookie, { intent: 'revoke', keyId: stored[0]!.id })
	const revokeOutcome = await throughLayout(revoke, '/settings/api-keys')
	if (!revokeOutcome.passed) throw new Error('the layout refused the settings page')
	const revoked = await apiKeysAction({ request: revoke, context: revokeOutcome.context, params: {} } as never)
	expect((revoked as Response).status).toBe(302)
	const [after] = await db.select().from(apiKeys).where(eq(apiKeys.userId, inspector.id))
	expect(after!.revokedAt).not.toBeNull()
})

test('[AUTH-018] polling the queue count does not extend an idle session; opening a page does', async () => {
	const author = await makeActor(db, 'author')
	const cookie = await sessionCookie(author)
	// Idle expiry: the session was last refreshed 5 minutes ago, so it has 25 of its 30 minutes left.
	const expiresAt = new Date(Date.now() + 25 * 60_000)
	await db.update(sessions).set({ expiresAt }).where(eq(sessions.userId, author.id))
	const get = (path: string) => new Request(`${ORIGIN}${path}`, { headers: { cookie } })
	const currentExpiry = async () =>
		(await db.select().from(sessions).where(eq(sessions.userId, author.id)))[0]!.expiresAt.getTime()

	expect((await throughLayout(get('/queue/count'), 'queue/count')).passed).toBe(true)
	expect(await currentExpiry()).toBe(expiresAt.getTime())
	expect((await throughLayout(get('/queue'), 'queue')).passed).toBe(true)
	expect(await currentExpiry()).toBeGreaterThan(expiresAt.getTime() + 4 * 60_000)
})

test('[AUTH-019] a signed-out background request sends the browser to sign in and back to the page it was on', async () => {
	const poll = new Request(`${ORIGIN}/queue/count`, { headers: { referer: `${ORIGIN}/specifications?q=acid` } })
	const outcome = await throughLayout(poll, 'queue/count')
	const thrown = !outcome.passed ? (outcome.thrown as Response) : null
	expect(thrown?.status).toBe(302)
	expect(thrown?.headers.get('location')).toBe(`/sign-in?redirectTo=${encodeURIComponent('/specifications?q=acid')}`)
	const foreign = new Request(`${ORIGIN}/queue/count`, { headers: { referer: 'https://elsewhere.example/x' } })
	const foreignOutcome = await throughLayout(foreign, 'queue/count')
	expect((!foreignOutcome.passed ? (foreignOutcome.thrown as Response) : null)?.headers.get('location')).toBe(
		'/sign-in?redirectTo=%2F',
	)
})

test('[QUE-010] /queue/count answers the length of the queue as JSON, and 403 to a role without a queue', async () => {
	const author = await makeActor(db, 'author')
	await makeSubmittableDraft(db, author)
	const reviewer = await makeActor(db, 'reviewer')
	const submitted = await makeSubmittableDraft(db, author)
	await takeStep(db, author, submitted.versionId, { type: 'submit' })
	const countFor = async (actor: Actor) => {
		const context = new RouterContextProvider()
		context.set(actorContext, actor)
		const response = await queueCountLoader({ request: new Request(`${ORIGIN}/queue/count`), context } as never)
		expect(response.headers.get('content-type')).toMatch(/^application\/json/)
		return QueueCountSchema.parse(await response.json()).count
	}
	expect(await countFor(author)).toBe((await listQueue(db, author)).length)
	expect(await countFor(author)).toBe(1)
	expect(await countFor(reviewer)).toBe(1)
	const inspector = await makeActor(db, 'inspector')
	await expect(countFor(inspector)).rejects.toMatchObject({ init: { status: 403 } })
})
