import { expect, test } from 'vitest'
import { documentPolicy, RESOURCE_POLICY, securityHeaders } from '#app/.server/security/headers.ts'

const directives = (policy: string) =>
	Object.fromEntries(policy.split('; ').map((part) => [part.split(' ')[0], part.split(' ').slice(1).join(' ')]))

test('[SEC-040] the production page policy: scripts only from us or with the nonce, our own frames, nothing framing us but us', () => {
	expect(directives(documentPolicy({ nonce: 'abc123==', development: false }))).toEqual({
		'default-src': "'self'",
		'script-src': "'self' 'nonce-abc123=='",
		'style-src': "'self' 'unsafe-inline'",
		'style-src-elem': "'self'",
		'style-src-attr': "'unsafe-inline'",
		'img-src': "'self' data: blob:",
		'font-src': "'self'",
		'connect-src': "'self'",
		'frame-src': "'self'",
		'frame-ancestors': "'self'",
		'object-src': "'none'",
		'base-uri': "'self'",
		'form-action': "'self'",
	})
})

test('[SEC-041] the development policy lets Vite inject its client, styles and HMR socket; production never does', () => {
	const development = directives(documentPolicy({ nonce: 'abc', development: true }))
	expect(development['script-src']).toBe("'self' 'unsafe-inline' 'unsafe-eval'")
	expect(development['style-src-elem']).toBe("'self' 'unsafe-inline'")
	expect(development['connect-src']).toBe("'self' ws: wss:")
	const production = documentPolicy({ nonce: 'abc', development: false })
	expect(production).not.toMatch(/script-src[^;]*unsafe/)
	expect(production).not.toContain('ws:')
})

test('[SEC-042] every response gets the same protective headers; pages the page policy, everything else the empty one', () => {
	const page = Object.fromEntries(
		securityHeaders({ contentType: 'text/html; charset=utf-8', nonce: 'n0nce', development: false, https: false }),
	)
	expect(page).toEqual({
		'Content-Security-Policy': documentPolicy({ nonce: 'n0nce', development: false }),
		'X-Content-Type-Options': 'nosniff',
		'X-Frame-Options': 'SAMEORIGIN',
		'Referrer-Policy': 'same-origin',
		'Permissions-Policy': 'camera=(), microphone=(), geolocation=(), payment=()',
		'Cross-Origin-Opener-Policy': 'same-origin',
		'Cross-Origin-Resource-Policy': 'same-origin',
	})
	for (const contentType of ['text/x-script', 'application/json', 'application/pdf', 'text/csv', null]) {
		const headers = Object.fromEntries(securityHeaders({ contentType, nonce: 'n', development: false, https: false }))
		expect(headers['Content-Security-Policy'], String(contentType)).toBe(RESOURCE_POLICY)
		expect(headers['X-Frame-Options']).toBe('SAMEORIGIN')
	}
	expect(RESOURCE_POLICY).toContain("default-src 'none'")
	expect(RESOURCE_POLICY).toContain("frame-ancestors 'self'")
})

test('[SEC-043] Strict-Transport-Security only when the browser reaches us over HTTPS', () => {
	const over = (https: boolean) =>
		Object.fromEntries(securityHeaders({ contentType: 'text/html', nonce: 'n', development: false, https }))
	expect(over(true)['Strict-Transport-Security']).toBe('max-age=31536000')
	expect(over(false)['Strict-Transport-Security']).toBeUndefined()
})
