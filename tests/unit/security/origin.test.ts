import { expect, test } from 'vitest'
import { allowedOrigins, decideCrossSite, loopbackTwins } from '#app/.server/security/origin.ts'

const allowed = allowedOrigins('http://127.0.0.1:4173/sign-in', 'http://127.0.0.1:4173')
const post = (headers: Partial<Parameters<typeof decideCrossSite>[0]>) =>
	decideCrossSite({ method: 'POST', origin: null, referer: null, cookie: null, fetchSite: null, allowed, ...headers })

test('[SEC-020] the allowed origins: the request URL, the public URL and its loopback twin', () => {
	expect([...allowed].sort()).toEqual(['http://127.0.0.1:4173', 'http://localhost:4173'])
	// Behind a TLS-terminating proxy the request URL says http, the browser says https: the public URL covers it.
	expect([...allowedOrigins('http://lab.example/x', 'https://lab.example')].sort()).toEqual([
		'http://lab.example',
		'https://lab.example',
	])
	expect([...allowedOrigins('http://lab.example/x', undefined)]).toEqual(['http://lab.example'])
	expect(loopbackTwins('http://localhost:3000/')).toEqual(['http://localhost:3000', 'http://127.0.0.1:3000'])
	expect(loopbackTwins('https://lab.example')).toEqual(['https://lab.example'])
})

test('[SEC-021] reading is never refused, whatever it claims to come from', () => {
	for (const method of ['GET', 'HEAD', 'get']) {
		expect(
			decideCrossSite({
				method,
				origin: 'https://attacker.example',
				referer: null,
				cookie: 'bandproof.session_token=x',
				fetchSite: 'cross-site',
				allowed,
			}),
		).toEqual({ ok: true })
	}
})

test('[SEC-022] a post from our own page passes; from another site, a sibling port or an opaque origin it is refused', () => {
	expect(post({ origin: 'http://127.0.0.1:4173', cookie: 'a=b' })).toEqual({ ok: true })
	expect(post({ origin: 'http://localhost:4173', cookie: 'a=b' })).toEqual({ ok: true })
	expect(post({ origin: 'HTTP://127.0.0.1:4173' })).toEqual({ ok: true })
	for (const origin of ['https://attacker.example', 'http://127.0.0.1:4174', 'https://127.0.0.1:4173', 'null', '']) {
		const decision = post({ origin, referer: 'http://127.0.0.1:4173/sign-in' })
		expect(decision.ok, origin).toBe(false)
		expect(decision.ok ? '' : decision.message).toContain('sent from another site')
	}
	// Every method that reaches an action is checked.
	for (const method of ['PUT', 'PATCH', 'DELETE', 'OPTIONS']) {
		expect(
			decideCrossSite({
				method,
				origin: 'https://attacker.example',
				referer: null,
				cookie: null,
				fetchSite: null,
				allowed,
			}).ok,
		).toBe(false)
	}
})

test('[SEC-023] without Origin, the Referer decides; Sec-Fetch-Site: cross-site is refused outright', () => {
	expect(post({ referer: 'http://127.0.0.1:4173/materials/new', cookie: 'a=b' })).toEqual({ ok: true })
	expect(post({ referer: 'https://attacker.example/trap.html' }).ok).toBe(false)
	expect(post({ referer: 'not a url' }).ok).toBe(false)
	expect(post({ referer: 'javascript:alert(1)' }).ok).toBe(false)
	expect(post({ origin: 'http://127.0.0.1:4173', fetchSite: 'cross-site' }).ok).toBe(false)
	expect(post({ origin: 'http://127.0.0.1:4173', fetchSite: 'same-origin' })).toEqual({ ok: true })
})

test('[SEC-024] naming no page at all passes only without a cookie (scripts, API clients), never with a session', () => {
	expect(post({})).toEqual({ ok: true })
	const refused = post({ cookie: 'bandproof.session_token=x' })
	expect(refused.ok).toBe(false)
	expect(refused.ok ? '' : refused.message).toContain('does not say which page sent it')
})
