import { eq } from 'drizzle-orm'
import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { documentPolicy } from '#app/.server/security/headers.ts'
import {
	apiProblemMiddleware,
	nonceContext,
	requestGuardMiddleware,
	securityHeadersMiddleware,
} from '#app/.server/security/middleware.ts'
import { action as signInAction } from '#app/routes/_public/sign-in.tsx'
import { auditActionsFor, makeActor, TEST_PASSWORD } from '#tests/support/factories.ts'

process.env.BETTER_AUTH_URL ??= 'http://localhost:3999'

function signInRequest(email: string, password: string, address: string): Request {
	return new Request('http://localhost:3999/sign-in', {
		method: 'POST',
		body: new URLSearchParams({ email, password }),
		headers: { Origin: 'http://localhost:3999', 'X-Forwarded-For': address },
	})
}

async function signIn(email: string, password: string, address: string) {
	const request = signInRequest(email, password, address)
	const url = new URL(request.url)
	const outcome = await signInAction({
		request,
		context: new RouterContextProvider(),
		params: {},
		url,
		pattern: url.pathname,
	})
	if (outcome instanceof Response) return { status: outcome.status, headers: outcome.headers, message: '' }
	const errors = (outcome.data.result.error?.[''] as Array<string> | undefined) ?? []
	return { status: outcome.init?.status ?? 200, headers: new Headers(outcome.init?.headers), message: errors.join(' ') }
}

test('[SEC-101] the 11th sign-in attempt within a minute from one address answers 429 with Retry-After and touches no account', async () => {
	const user = await makeActor(db, 'author')
	const address = '198.51.100.101'
	for (let n = 1; n <= 10; n++) {
		expect((await signIn(`nobody-${n}@bandproof.test`, 'wrong-password', address)).status).toBe(401)
	}
	const refused = await signIn(user.email, TEST_PASSWORD, address)
	expect(refused.status).toBe(429)
	expect(Number(refused.headers.get('Retry-After'))).toBeGreaterThan(0)
	expect(refused.message).toContain('Too many sign-in attempts')
	// A refused attempt is not a wrong password: the account's count and the audit trail are untouched.
	const [row] = await db.select().from(users).where(eq(users.id, user.id))
	expect(row?.failedSignIns).toBe(0)
	expect(await auditActionsFor(db, user.id)).toEqual(['user.created'])
	// From another address the same person signs in at once.
	const signedIn = await signIn(user.email, TEST_PASSWORD, '198.51.100.102')
	expect(signedIn.status).toBe(302)
	expect(await auditActionsFor(db, user.id)).toEqual(['user.created', 'user.signed-in'])
})

test('[SEC-102] the lock-out after five wrong passwords stays, and successful sign-ins never use up the limit', async () => {
	const user = await makeActor(db, 'reviewer')
	const address = '198.51.100.103'
	for (let n = 1; n <= 12; n++) expect((await signIn(user.email, TEST_PASSWORD, address)).status).toBe(302)
	for (let n = 1; n <= 5; n++) expect((await signIn(user.email, 'wrong-password', address)).status).toBe(401)
	const locked = await signIn(user.email, TEST_PASSWORD, address)
	expect(locked.status).toBe(403)
	expect(locked.message).toContain('locked')
})

test('[SEC-103] the root middleware refuses a cross-site post with 403 before the action, and puts the headers on every answer', async () => {
	const context = new RouterContextProvider()
	const args = (request: Request) => ({ request, context, params: {}, url: new URL(request.url), pattern: '/sign-out' })
	const crossSite = new Request('http://localhost:3999/sign-out', {
		method: 'POST',
		headers: { Origin: 'https://attacker.example', Cookie: 'bandproof.session_token=x' },
	})
	let reached = false
	const next = async () => {
		reached = true
		return new Response('<!DOCTYPE html>', { headers: { 'Content-Type': 'text/html' } })
	}
	await expect(requestGuardMiddleware(args(crossSite), next)).rejects.toMatchObject({ init: { status: 403 } })
	expect(reached).toBe(false)

	const own = new Request('http://localhost:3999/sign-out', {
		method: 'POST',
		headers: { Origin: 'http://localhost:3999' },
	})
	const page = await securityHeadersMiddleware(args(own), () => requestGuardMiddleware(args(own), next))
	expect(reached).toBe(true)
	const nonce = context.get(nonceContext)
	expect(nonce).toMatch(/^[A-Za-z0-9+/]{22}==$/)
	// Vitest runs the code as Vite's development mode does, so the looser development policy is the one expected here.
	expect(page.headers.get('Content-Security-Policy')).toBe(
		documentPolicy({ nonce: nonce!, development: import.meta.env.DEV }),
	)
	expect(page.headers.get('X-Frame-Options')).toBe('SAMEORIGIN')

	// A redirect (frozen headers) and a route's own policy are handled: the first copied, the second kept.
	const redirect = await securityHeadersMiddleware(args(own), async () =>
		Response.redirect('http://localhost:3999/', 302),
	)
	expect(redirect.status).toBe(302)
	expect(redirect.headers.get('X-Content-Type-Options')).toBe('nosniff')
	const ownPolicy = await securityHeadersMiddleware(
		args(own),
		async () => new Response('{}', { headers: { 'Content-Security-Policy': "sandbox; default-src 'none'" } }),
	)
	expect(ownPolicy.headers.get('Content-Security-Policy')).toBe("sandbox; default-src 'none'")
})

test('[SEC-104] an oversized form is refused with 413 before the action reads it', async () => {
	const body = 'name=' + 'x'.repeat(1024 * 1024)
	const request = new Request('http://localhost:3999/materials/new', {
		method: 'POST',
		body,
		headers: {
			Origin: 'http://localhost:3999',
			'Content-Type': 'application/x-www-form-urlencoded',
			'Content-Length': String(body.length),
		},
	})
	const args = { request, context: new RouterContextProvider(), params: {}, url: new URL(request.url), pattern: '/' }
	await expect(requestGuardMiddleware(args, async () => new Response('read'))).rejects.toMatchObject({
		data: { message: expect.stringContaining('larger than 1 MB') },
		init: { status: 413 },
	})
})

/** An RFC 9457 problem (§3.1 members, §6.1 media type) with the status expected. */
async function expectProblem(response: Response, status: number): Promise<string> {
	expect(response.status).toBe(status)
	expect(response.headers.get('Content-Type')).toBe('application/problem+json')
	const problem = (await response.json()) as { type: string; title: string; status: number; detail: string }
	expect(problem).toMatchObject({ type: 'about:blank', status, title: expect.any(String), detail: expect.any(String) })
	return problem.detail
}

/** Runs the guard as the root does, returning what it answers or throws (React Router sends a thrown Response as is). */
async function guard(request: Request, next: () => Promise<Response>): Promise<Response> {
	const args = { request, context: new RouterContextProvider(), params: {}, url: new URL(request.url), pattern: '/' }
	try {
		return await requestGuardMiddleware(args, next)
	} catch (thrown) {
		if (thrown instanceof Response) return thrown
		throw thrown
	}
}

test('[SEC-105] under /api/v1 the guard refuses as application/problem+json: 403 cross-site, 413 too large, 411 no length', async () => {
	let reached = false
	const next = async () => {
		reached = true
		return new Response('{}', { headers: { 'Content-Type': 'application/json' } })
	}
	const compare = `http://localhost:3999/api/v1/specifications/${crypto.randomUUID()}/compare`
	const crossSite = new Request(compare, {
		method: 'POST',
		body: '{}',
		headers: {
			Origin: 'https://attacker.example',
			Cookie: 'bandproof.session_token=x',
			'Content-Type': 'application/json',
		},
	})
	expect(await expectProblem(await guard(crossSite, next), 403)).toContain('another site')

	const body = JSON.stringify({ sampleSpectrumId: 'x'.repeat(1024 * 1024) })
	const tooLarge = new Request(compare, {
		method: 'POST',
		body,
		headers: { 'Content-Type': 'application/json', 'Content-Length': String(body.length) },
	})
	expect(await expectProblem(await guard(tooLarge, next), 413)).toContain('request body is larger than 1 MB')

	const unknownLength = new Request(compare, {
		method: 'POST',
		body: '{}',
		headers: { 'Content-Type': 'application/json', 'Transfer-Encoding': 'chunked' },
	})
	await expectProblem(await guard(unknownLength, next), 411)
	expect(reached).toBe(false)

	// The same refusal elsewhere stays the error page's message (React Router's `data()`), not a problem.
	const page = new Request('http://localhost:3999/sign-out', {
		method: 'POST',
		headers: { Origin: 'https://attacker.example', Cookie: 'bandproof.session_token=x' },
	})
	await expect(guard(page, next)).rejects.toMatchObject({
		data: { message: expect.any(String) },
		init: { status: 403 },
	})
})

test('[SEC-106] under /api/v1 any other error answer becomes a problem with its status: the HTML 404 page, a 405 with Allow', async () => {
	const args = (request: Request) => ({
		request,
		context: new RouterContextProvider(),
		params: {},
		url: new URL(request.url),
		pattern: '/',
	})
	const htmlNotFound = async () =>
		new Response('<!DOCTYPE html><title>Not found</title>', {
			status: 404,
			headers: { 'Content-Type': 'text/html; charset=utf-8' },
		})
	const unknown = new Request('http://localhost:3999/api/v1/no-such-thing')
	const notFound = await apiProblemMiddleware(args(unknown), htmlNotFound)
	expect(await expectProblem(notFound, 404)).toContain('/api/v1/openapi.json')

	// React Router answers a POST to a resource route without an action with 405 (as JSON naming the route file);
	// RFC 9110 §15.5.6: a 405 MUST carry Allow with the methods the resource supports, and GET brings HEAD (§9.3.2).
	const methodNotAllowed = async () =>
		Response.json({ message: 'routes/api/v1/materials has no action' }, { status: 405 })
	const post = new Request('http://localhost:3999/api/v1/materials', { method: 'POST' })
	const refused = await apiProblemMiddleware(args(post), methodNotAllowed)
	expect(refused.headers.get('Allow')).toBe('GET, HEAD')
	expect(await expectProblem(refused, 405)).not.toContain('routes/')
	const compare = new Request(`http://localhost:3999/api/v1/specifications/${crypto.randomUUID()}/compare`)
	expect((await apiProblemMiddleware(args(compare), methodNotAllowed)).headers.get('Allow')).toBe('POST')

	// Problems and successes pass untouched; paths outside the API keep their HTML page.
	const problem = new Response('{"status":401}', {
		status: 401,
		headers: { 'Content-Type': 'application/problem+json' },
	})
	expect(await apiProblemMiddleware(args(post), async () => problem)).toBe(problem)
	const page = await apiProblemMiddleware(args(new Request('http://localhost:3999/no-such-page')), htmlNotFound)
	expect(page.headers.get('Content-Type')).toContain('text/html')
})
