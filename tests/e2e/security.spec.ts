import { type APIResponse } from '@playwright/test'
import { expect, signIn, snapshot, test, uniqueEmail } from './fixtures.ts'

// Hardening (issue 7 item 4): security headers, cross-site refusals, body-size caps and sign-in rate limits against the
// production build. The fixture fails any test with a browser console error, so a Content-Security-Policy violation
// anywhere in these journeys (an inline script without the nonce, a blocked style sheet, a blocked frame) fails it.

/** The headers every response carries (app/.server/security/headers.ts). */
function expectSecurityHeaders(response: APIResponse | { headers(): Record<string, string> }) {
	const headers = response.headers()
	expect(headers['x-content-type-options']).toBe('nosniff')
	expect(headers['x-frame-options']).toBe('SAMEORIGIN')
	expect(headers['referrer-policy']).toBe('same-origin')
	expect(headers['permissions-policy']).toContain('camera=()')
	expect(headers['permissions-policy']).toContain('microphone=()')
	expect(headers['permissions-policy']).toContain('geolocation=()')
	expect(headers['cross-origin-opener-policy']).toBe('same-origin')
	expect(headers['content-security-policy']).toContain("frame-ancestors 'self'")
	return headers
}

/** The directives of a Content-Security-Policy header, by name. */
function directives(policy: string): Map<string, Array<string>> {
	return new Map(
		policy
			.split(';')
			.map((part) => part.trim().split(/\s+/))
			.filter((parts) => parts[0])
			.map(([name, ...values]) => [name!, values]),
	)
}

test('[SEC-E2E-001] pages and data requests carry the security headers; sign-in, a specification with its chart and the dossier preview work under the policy', async ({
	page,
}) => {
	test.setTimeout(120_000)
	const response = await page.goto('/sign-in')
	const headers = expectSecurityHeaders(response!)
	const policy = directives(headers['content-security-policy']!)
	const scriptSources = policy.get('script-src') ?? []
	expect(scriptSources).toContain("'self'")
	expect(scriptSources).not.toContain("'unsafe-inline'")
	expect(scriptSources).not.toContain("'unsafe-eval'")
	const nonceSource = scriptSources.find((source) => source.startsWith("'nonce-"))
	expect(nonceSource).toBeDefined()
	expect(policy.get('object-src')).toEqual(["'none'"])
	expect(policy.get('base-uri')).toEqual(["'self'"])
	expect(policy.get('form-action')).toEqual(["'self'"])
	expect(policy.get('frame-src')).toEqual(["'self'"])
	expect(policy.get('style-src-elem')).toEqual(["'self'"])
	// Every inline script of the page carries this response's nonce (the browser hides the attribute, not the property).
	const inline = await page.evaluate(() =>
		[...document.scripts].filter((script) => !script.src).map((script) => script.nonce),
	)
	expect(inline.length).toBeGreaterThan(0)
	for (const nonce of inline) expect(`'nonce-${nonce}'`).toBe(nonceSource)
	// A fresh nonce for every response.
	const again = await page.request.get('/sign-in')
	expect(again.headers()['content-security-policy']).not.toContain(nonceSource!)

	await signIn(page, 'approver@bandproof.test')
	await expect(page.getByRole('navigation', { name: 'Main' })).toBeVisible()

	// A client-side navigation fetches React Router's data request; it carries the headers too, with the strict policy
	// of a non-page response.
	const dataResponse = page.waitForResponse((candidate) => new URL(candidate.url()).pathname.endsWith('.data'))
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Specifications' }).click()
	const dataHeaders = expectSecurityHeaders(await dataResponse)
	expect(dataHeaders['content-security-policy']).toContain("default-src 'none'")

	// The version page: the chart draws after hydration (its data come from a fetch), under the policy.
	await page.getByRole('link', { name: 'QC-IR-0003', exact: true }).click()
	await expect(page).toHaveTitle('QC-IR-0003 v1 (In review) · Bandproof')
	const chart = page.locator('[role="group"][aria-label^="Spectrum chart"]').first()
	await expect(chart).toBeVisible()
	await expect(chart.locator('path').first()).toBeVisible()

	// The dossier preview: our own PDF in an iframe (frame-src 'self'; the PDF allows framing by our pages only).
	const dossier = page.getByRole('region', { name: 'Dossier' })
	const pdfResponse = page.waitForResponse((candidate) => candidate.url().includes('/dossier/pdf?inline=1'))
	await dossier.getByRole('button', { name: 'Preview' }).click()
	const pdf = await pdfResponse
	expect(pdf.status()).toBe(200)
	expect(pdf.headers()['content-type']).toBe('application/pdf')
	expectSecurityHeaders(pdf)
	await expect(dossier.locator('iframe[title="Dossier preview"]')).toBeVisible()
	await expect(dossier.getByRole('status')).toHaveCount(0, { timeout: 20_000 })
	expect(page.frames().some((frame) => frame.url().includes('/dossier/pdf?inline=1'))).toBe(true)
	await snapshot(page, 'security-preview-under-csp')

	// Resource routes and error pages carry the headers as well.
	expectSecurityHeaders(await page.request.get('/healthz'))
	const missing = await page.request.get('/no-such-page')
	expect(missing.status()).toBe(404)
	expect(expectSecurityHeaders(missing)['content-security-policy']).toContain("'nonce-")
})

test('[SEC-E2E-002] a post from another site is refused with 403 and changes nothing; oversized bodies get 413', async ({
	page,
	baseURL,
}) => {
	const foreign = 'https://attacker.example'
	const form = { email: 'admin@bandproof.test', password: 'calder-vale-demo' }

	// A page action (the sign-in form) posted from another site: refused before the action runs, so no session.
	const crossSite = await page.request.post('/sign-in', { form, headers: { Origin: foreign }, maxRedirects: 0 })
	expect(crossSite.status()).toBe(403)
	expect(await crossSite.text()).toContain('sent from another site')
	expect(crossSite.headers()['set-cookie'] ?? '').not.toContain('bandproof')
	expectSecurityHeaders(crossSite)
	// The same through React Router's data request.
	const crossSiteData = await page.request.post('/sign-in.data', { form, headers: { Origin: foreign } })
	expect(crossSiteData.status()).toBe(403)

	// Signed in, a resource route's action (the one-file upload) is refused just the same, as JSON.
	await signIn(page, 'author@bandproof.test')
	const upload = await page.request.post('/spectra/upload-file', {
		multipart: { purpose: 'sample', file: { name: 'x.jdx', mimeType: 'text/plain', buffer: Buffer.from('##TITLE=x') } },
		headers: { Origin: foreign },
	})
	expect(upload.status()).toBe(403)
	expect(await upload.json()).toMatchObject({ message: expect.stringContaining('sent from another site') })
	// A Referer from another site counts when Origin is missing; a cookie-bearing post naming no page at all is refused.
	const viaReferer = await page.request.post('/sign-out', { headers: { Referer: `${foreign}/trap.html` } })
	expect(viaReferer.status()).toBe(403)
	const namingNoPage = await page.request.post('/sign-out')
	expect(namingNoPage.status()).toBe(403)
	// Still signed in: none of the refused posts reached sign-out.
	await page.goto('/')
	await expect(page.getByRole('navigation', { name: 'Main' })).toBeVisible()

	// A form body over 1 MB is refused unread, from our own origin too; a multipart body to a non-upload route as well.
	const huge = 'x'.repeat(1024 * 1024 + 1)
	const tooLarge = await page.request.post('/materials/new', {
		form: { code: 'RM-9999', name: huge },
		headers: { Origin: baseURL! },
	})
	expect(tooLarge.status()).toBe(413)
	expect(await tooLarge.text()).toContain('larger than 1 MB')
	const multipartElsewhere = await page.request.post('/materials/new', {
		multipart: { code: 'RM-9999', name: huge },
		headers: { Origin: baseURL! },
	})
	expect(multipartElsewhere.status()).toBe(413)
})

test('[SEC-E2E-003] the 11th sign-in attempt within a minute from one address, or for one e-mail, gets 429 with Retry-After', async ({
	page,
	baseURL,
}) => {
	test.setTimeout(90_000)
	// Per client address (X-Forwarded-For, as the reverse proxy sets it): ten wrong attempts for ten different e-mails.
	const address = `198.51.100.${Math.floor(Math.random() * 200) + 20}` // TEST-NET-2 (RFC 5737)
	const attempt = (email: string, from: string) =>
		page.request.post('/sign-in', {
			form: { email, password: 'not-the-password' },
			headers: { Origin: baseURL!, 'X-Forwarded-For': from },
		})
	for (let n = 1; n <= 10; n++) expect((await attempt(uniqueEmail(`rate-${n}`), address)).status()).toBe(401)
	const eleventh = await attempt(uniqueEmail('rate-11'), address)
	expect(eleventh.status()).toBe(429)
	const retryAfter = Number(eleventh.headers()['retry-after'])
	expect(retryAfter).toBeGreaterThan(0)
	expect(retryAfter).toBeLessThanOrEqual(60)
	expect(await eleventh.text()).toContain('Too many sign-in attempts')
	expectSecurityHeaders(eleventh)
	// Another address is not held up by it.
	expect((await attempt(uniqueEmail('rate-other'), '203.0.113.9')).status()).toBe(401)
	// better-auth's own endpoint counts against the same limit.
	const direct = await page.request.post('/api/auth/sign-in/email', {
		data: { email: uniqueEmail('rate-api'), password: 'not-the-password' },
		headers: { Origin: baseURL!, 'X-Forwarded-For': address },
	})
	expect(direct.status()).toBe(429)

	// Per e-mail, in the browser: ten wrong passwords for one address of no account, then the form says to wait.
	const email = uniqueEmail('rate-mail')
	for (let n = 1; n <= 10; n++) {
		await signIn(page, email, `wrong-${n}`)
		await expect(page.getByRole('alert')).toContainText('The e-mail or the password is not right')
	}
	await signIn(page, email, 'wrong-11')
	await expect(page.getByRole('alert')).toContainText('Too many sign-in attempts')
	await snapshot(page, 'sign-in-rate-limited')
})

/** An RFC 9457 problem (§3.1 members, §6.1 media type) with the status expected, carrying the security headers. */
async function expectProblem(response: APIResponse, status: number): Promise<string> {
	expect(response.status()).toBe(status)
	expect(response.headers()['content-type']).toBe('application/problem+json')
	expectSecurityHeaders(response)
	const problem = (await response.json()) as { type: string; title: string; status: number; detail: string }
	expect(problem).toMatchObject({ type: 'about:blank', status, title: expect.any(String), detail: expect.any(String) })
	return problem.detail
}

test('[SEC-E2E-004] every refusal under /api/v1 is application/problem+json: guards, unknown paths, methods and rate limits', async ({
	page,
	baseURL,
}) => {
	const compare = `/api/v1/specifications/${crypto.randomUUID()}/compare`
	// Not an HTML page for an unknown API path, nor for a method the resource does not answer (with Allow, RFC 9110 §15.5.6).
	expect(await expectProblem(await page.request.get('/api/v1/no-such-thing'), 404)).toContain('openapi.json')
	const post = await page.request.post('/api/v1/materials', { data: {} })
	await expectProblem(post, 405)
	expect(post.headers()['allow']).toBe('GET, HEAD')

	// The root guard: a cookie-bearing post from another site, and a body over 1 MB.
	await signIn(page, 'author@bandproof.test')
	const crossSite = await page.request.post(compare, { data: {}, headers: { Origin: 'https://attacker.example' } })
	expect(await expectProblem(crossSite, 403)).toContain('another site')
	const huge = await page.request.post(compare, {
		data: { sampleSpectrumId: 'x'.repeat(1024 * 1024) },
		headers: { Origin: baseURL! },
	})
	expect(await expectProblem(huge, 413)).toContain('larger than 1 MB')

	// A key made in the settings, used by a script: its answers carry RateLimit; a text body is 415.
	await page.goto('/settings/api-keys')
	await page.getByLabel('Name').fill('E2E problem script')
	await page.getByRole('checkbox', { name: /write/ }).check()
	await page.getByRole('button', { name: 'Create key' }).click()
	const token = (await page.getByTestId('new-api-key').textContent())!.trim()
	const script = await page.context().browser()!.newContext({ baseURL })
	try {
		const auth = { Authorization: `Bearer ${token}` }
		const listed = await script.request.get('/api/v1/materials', { headers: auth })
		expect(listed.status()).toBe(200)
		expect(listed.headers()['ratelimit-policy']).toMatch(/^"per-key";q=\d+;w=\d+$/)
		const textBody = await script.request.post(compare, {
			headers: { ...auth, 'Content-Type': 'text/plain' },
			data: 'not json',
		})
		await expectProblem(textBody, 415)

		// Without a valid key, one address (X-Forwarded-For, from the reverse proxy) gets API_RATE_LIMIT_PER_ADDRESS
		// answers (401), then 429 with Retry-After in delay-seconds (RFC 6585 §4; RFC 9110 §10.2.3).
		const address = `198.51.100.${Math.floor(Math.random() * 200) + 20}` // TEST-NET-2 (RFC 5737)
		const anonymous = () => script.request.get('/api/v1/materials', { headers: { 'X-Forwarded-For': address } })
		const first = await anonymous()
		await expectProblem(first, 401)
		const quota = Number(/;q=(\d+);/.exec(first.headers()['ratelimit-policy'] ?? '')?.[1])
		expect(quota).toBeGreaterThan(0)
		for (let n = 2; n <= quota; n++) expect((await anonymous()).status()).toBe(401)
		const limited = await anonymous()
		expect(await expectProblem(limited, 429)).toContain('Too many requests')
		expect(limited.headers()['retry-after']).toMatch(/^\d+$/)
		// The key's own window is separate.
		expect(
			(await script.request.get('/api/v1/materials', { headers: { ...auth, 'X-Forwarded-For': address } })).status(),
		).toBe(200)
	} finally {
		await script.close()
	}
})
