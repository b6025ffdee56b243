import { expect, test } from 'vitest'
import { apiLimitMessage, rateLimitHeaders, takeApiRequest } from '#app/.server/security/api-limits.ts'

const RULES = {
	'per-key': { max: 3, windowMs: 60_000 },
	'per-address': { max: 2, windowMs: 10_000 },
}

test('[SEC-060] each key and each address has its own window; the refusal carries Retry-After and a zero remainder', () => {
	const key = { keyId: crypto.randomUUID() }
	const decisions = [0, 1_000, 2_000, 3_000].map((at) => takeApiRequest(key, at, RULES))
	expect(decisions.map((outcome) => outcome.decision.allowed)).toEqual([true, true, true, false])
	expect(decisions.every((outcome) => outcome.policy === 'per-key')).toBe(true)
	// Another key, and an address, start afresh.
	expect(takeApiRequest({ keyId: crypto.randomUUID() }, 3_000, RULES).decision.allowed).toBe(true)
	const address = { address: '192.0.2.11' } // TEST-NET-1 (RFC 5737)
	expect(takeApiRequest(address, 3_000, RULES)).toMatchObject({ policy: 'per-address', decision: { remaining: 1 } })

	// draft-ietf-httpapi-ratelimit-headers-10 §§3–4 (an Internet-Draft, work in progress): the policy as a String item
	// with q (quota) and w (window seconds); the current state with r (remaining) and t (seconds). Retry-After in
	// delay-seconds (RFC 9110 §10.2.3): the first hit at 0 leaves the 60 s window at 60 000 ms, 57 s after 3 000 ms.
	expect(rateLimitHeaders(decisions[0]!)).toEqual([
		['RateLimit-Policy', '"per-key";q=3;w=60'],
		['RateLimit', '"per-key";r=2;t=60'],
	])
	expect(rateLimitHeaders(decisions[3]!)).toEqual([
		['RateLimit-Policy', '"per-key";q=3;w=60'],
		['RateLimit', '"per-key";r=0;t=57'],
		['Retry-After', '57'],
	])
	const refused = decisions[3]!
	if (refused.decision.allowed) throw new Error('expected a refusal')
	expect(apiLimitMessage({ ...refused, decision: refused.decision })).toBe(
		'Too many requests for this API key: at most 3 in 60 seconds. Wait 57 seconds and try again.',
	)
})
