import { count } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { apiRateLimitRules } from '#app/.server/security/api-limits.ts'
import { loader as materialsLoader } from '#app/routes/api/v1/materials.ts'
import { action as spectraAction } from '#app/routes/api/v1/spectra.ts'
import { apiGet, apiKeyFor, apiUpload, callApiRoute } from '#tests/support/api-requests.ts'
import { makeActor } from '#tests/support/factories.ts'

const SPECTRUM = 'compounds/4_chloroaniline_solid_pe1000.jdx'

/**
 * The rate-limit fields of draft-ietf-httpapi-ratelimit-headers-10 (IETF HTTPAPI, an Internet-Draft, work in
 * progress), §§3–4: RateLimit-Policy is a List whose Item is the policy name (a String) with parameter `q` (quota,
 * Integer) and `w` (window seconds); RateLimit carries `r` (remaining) and `t` (seconds until reset). Strings are
 * double-quoted and parameters are `;key=value` (RFC 9651 §3.1.2, §3.3.3).
 */
function rateLimitFields(response: Response) {
	const policy = /^"([a-z-]+)";q=(\d+);w=(\d+)$/.exec(response.headers.get('RateLimit-Policy') ?? '')
	const current = /^"([a-z-]+)";r=(\d+);t=(\d+)$/.exec(response.headers.get('RateLimit') ?? '')
	expect(policy, 'RateLimit-Policy').not.toBeNull()
	expect(current, 'RateLimit').not.toBeNull()
	expect(current![1]).toBe(policy![1])
	return {
		policy: policy![1]!,
		quota: Number(policy![2]),
		window: Number(policy![3]),
		remaining: Number(current![2]),
		reset: Number(current![3]),
	}
}

/**
 * A 429 as RFC 6585 §4 (Too Many Requests) and RFC 9457 §3.1 (problem members) describe it, with Retry-After as
 * delay-seconds, a non-negative decimal integer (RFC 9110 §10.2.3), here at most the window.
 */
async function expectTooManyRequests(response: Response, windowSeconds: number): Promise<string> {
	expect(response.status).toBe(429)
	expect(response.headers.get('Content-Type')).toBe('application/problem+json')
	const retryAfter = response.headers.get('Retry-After') ?? ''
	expect(retryAfter).toMatch(/^\d+$/)
	expect(Number(retryAfter)).toBeGreaterThanOrEqual(1)
	expect(Number(retryAfter)).toBeLessThanOrEqual(windowSeconds)
	const problem = (await response.json()) as { type: string; title: string; status: number; detail: string }
	expect(problem).toMatchObject({ type: 'about:blank', title: 'Too Many Requests', status: 429 })
	expect(problem.detail).toContain('Too many requests')
	return problem.detail
}

async function countRows() {
	const [stored] = await db.select({ n: count() }).from(spectra)
	const [events] = await db.select({ n: count() }).from(auditEvents)
	return { spectra: stored!.n, auditEvents: events!.n }
}

test('[API-101] one key may make API_RATE_LIMIT_PER_KEY requests a window; the next answers 429, changes nothing, and another key is unaffected', async () => {
	const rules = apiRateLimitRules()
	const { max, windowMs } = rules['per-key']
	const windowSeconds = windowMs / 1000
	const author = await makeActor(db, 'author')
	const busy = await apiKeyFor(author, ['read', 'write'])
	const other = await apiKeyFor(author, ['read', 'write'])

	for (let n = 1; n <= max; n++) {
		const response = await callApiRoute(materialsLoader, apiGet('/materials', busy))
		expect(response.status).toBe(200)
		if (n === 1 || n === max) {
			const fields = rateLimitFields(response)
			expect(fields).toMatchObject({ policy: 'per-key', quota: max, window: windowSeconds, remaining: max - n })
			expect(fields.reset).toBeLessThanOrEqual(windowSeconds)
		}
	}

	// The N+1th request is a write: refused before it is read, so no spectrum and no audit event appear.
	const before = await countRows()
	const refused = await callApiRoute(spectraAction, apiUpload(busy, SPECTRUM))
	const detail = await expectTooManyRequests(refused, windowSeconds)
	expect(detail).toContain('this API key')
	expect(rateLimitFields(refused)).toMatchObject({ policy: 'per-key', remaining: 0 })
	expect(await countRows()).toEqual(before)
	// Reads are refused alike: the limit is per key, not per route.
	await expectTooManyRequests(await callApiRoute(materialsLoader, apiGet('/materials', busy)), windowSeconds)

	// Another key of the same person has its own window: the same upload goes through.
	const accepted = await callApiRoute(spectraAction, apiUpload(other, SPECTRUM))
	expect(accepted.status).toBe(201)
	expect(rateLimitFields(accepted)).toMatchObject({ policy: 'per-key', remaining: max - 1 })
	expect((await countRows()).spectra).toBe(before.spectra + 1)
})

test('[API-102] without a valid key, requests count per client address: the next one past the limit is 429 there only, and a valid key from that address still works', async () => {
	const rules = apiRateLimitRules()
	const { max, windowMs } = rules['per-address']
	const windowSeconds = windowMs / 1000
	// Documentation addresses (RFC 5737, TEST-NET-2 and TEST-NET-3), as the reverse proxy would append them.
	const address = '198.51.100.201'
	const elsewhere = '203.0.113.201'
	const unknownKey = `bp_${'0'.repeat(64)}`

	for (let n = 1; n <= max; n++) {
		const response = await callApiRoute(materialsLoader, apiGet('/materials', n % 2 === 0 ? unknownKey : null, address))
		expect(response.status).toBe(401)
		if (n === max) expect(rateLimitFields(response)).toMatchObject({ policy: 'per-address', quota: max, remaining: 0 })
	}
	const refused = await callApiRoute(materialsLoader, apiGet('/materials', unknownKey, address))
	const detail = await expectTooManyRequests(refused, windowSeconds)
	expect(detail).toContain('without a valid API key')
	// 429 comes before 401: a client over the limit is not told whether its key exists.
	expect(refused.headers.get('WWW-Authenticate')).toBeNull()

	expect((await callApiRoute(materialsLoader, apiGet('/materials', unknownKey, elsewhere))).status).toBe(401)
	const reader = await makeActor(db, 'reviewer')
	const token = await apiKeyFor(reader, ['read'])
	const valid = await callApiRoute(materialsLoader, apiGet('/materials', token, address))
	expect(valid.status).toBe(200)
	expect(rateLimitFields(valid).policy).toBe('per-key')
})
