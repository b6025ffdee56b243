import { type APIRequestContext, type Page } from '@playwright/test'
import { expect, signIn, snapshot, test } from './fixtures.ts'

// Settings → API keys lives inside the signed-in layout; a key is shown once and acts through /api/v1 with the
// owner's roles until it is revoked (DEVELOPERS.md, "API"). Errors are application/problem+json (RFC 9457).

/** Opens the page from the sidebar, as a person would. */
async function openApiKeys(page: Page) {
	const nav = page.getByRole('navigation', { name: 'Main' })
	await nav.getByRole('link', { name: 'API keys' }).click()
	await expect(page).toHaveURL(/\/settings\/api-keys$/)
	await expect(page.getByRole('heading', { level: 1, name: 'API keys' })).toBeVisible()
	await expect(nav.getByRole('link', { name: 'API keys' })).toHaveAttribute('aria-current', 'page')
}

/** Creates a key in the browser and reads the secret from the one answer that shows it. */
async function createKey(page: Page, name: string): Promise<string> {
	await page.getByLabel('Name').fill(name)
	await page.getByRole('button', { name: 'Create key' }).click()
	const secret = page.getByTestId('new-api-key')
	await expect(secret).toHaveText(/^bp_[0-9a-f]{64}$/)
	return (await secret.textContent())!
}

const listSpecifications = (request: APIRequestContext, token: string) =>
	request.get('/api/v1/specifications?page=1&pageSize=10', { headers: { Authorization: `Bearer ${token}` } })

/** An RFC 9457 problem: its media type and its members. */
async function expectProblem(response: Awaited<ReturnType<APIRequestContext['get']>>, status: number) {
	expect(response.status()).toBe(status)
	expect(response.headers()['content-type']).toBe('application/problem+json')
	const problem = (await response.json()) as { type: string; title: string; status: number; detail: string }
	expect(problem).toMatchObject({ type: 'about:blank', status })
	return problem
}

test('[APIK-010] a key made in the browser is shown once, reads the API from a script, and answers 401 once revoked', async ({
	page,
	request,
}) => {
	const name = `Nightly export ${Date.now().toString(36)}`
	await page.context().grantPermissions(['clipboard-read', 'clipboard-write'])
	await signIn(page, 'author@bandproof.test')
	await openApiKeys(page)
	await expect(page.getByRole('heading', { name: 'You have no API keys yet' })).toBeVisible()
	await snapshot(page, 'api-keys-page')
	const token = await createKey(page, name)
	await expect(page.getByTestId('api-key-row').filter({ hasText: name })).toContainText('never')
	// The form starts afresh, and the key goes to the clipboard with one click.
	await expect(page.getByLabel('Name')).toHaveValue('')
	await page.getByRole('button', { name: 'Copy key' }).click()
	await expect(page.getByText('Copied', { exact: true })).toBeVisible()
	expect(await page.evaluate(() => navigator.clipboard.readText())).toBe(token)
	await snapshot(page, 'api-key-created')

	// The script: Playwright's own request context, no browser cookies, only the key.
	const response = await listSpecifications(request, token)
	expect(response.status()).toBe(200)
	expect(response.headers()['content-type']).toMatch(/^application\/json/)
	const body = (await response.json()) as { items: Array<{ documentNumber: string }>; total: number }
	expect(body.total).toBeGreaterThan(0)
	expect(body.items.map((item) => item.documentNumber)).toContain('QC-IR-0001')

	// Shown once: after a reload only the display prefix remains, and the key notes its use.
	await page.reload()
	await expect(page.getByTestId('new-api-key')).toHaveCount(0)
	await expect(page.getByText(token)).toHaveCount(0)
	const row = page.getByTestId('api-key-row').filter({ hasText: name })
	await expect(row).toContainText(`${token.slice(0, 11)}…`)
	await expect(row).toContainText('active')
	await expect(row).not.toContainText('never')

	await row.getByRole('button', { name: `Revoke ${name}` }).click()
	await expect(page.getByRole('status').filter({ hasText: 'API key revoked' })).toBeVisible()
	await expect(row).toContainText('revoked')
	await expect(row.getByRole('button')).toHaveCount(0)
	await snapshot(page, 'api-key-revoked')

	const problem = await expectProblem(await listSpecifications(request, token), 401)
	expect(problem.detail).toMatch(/revoked/)
})

test('[APIK-011] an inspector manages a read-only key of their own inside the signed-in layout', async ({
	page,
	request,
}) => {
	const name = `Inspection reader ${Date.now().toString(36)}`
	await signIn(page, 'inspector@bandproof.test')
	await openApiKeys(page)
	// Inspectors are offered the read scope only (apiKeyScopesFor); the form has no write box at all.
	await expect(page.getByRole('checkbox', { name: 'read (GET)' })).toBeChecked()
	await expect(page.getByRole('checkbox', { name: /write/ })).toHaveCount(0)
	const token = await createKey(page, name)
	// The key authenticates (not 401); the inspector's role still may not list specifications (403).
	await expectProblem(await listSpecifications(request, token), 403)
	const row = page.getByTestId('api-key-row').filter({ hasText: name })
	await expect(row).toContainText('read')
	await row.getByRole('button', { name: `Revoke ${name}` }).click()
	await expect(row).toContainText('revoked')
	await expectProblem(await listSpecifications(request, token), 401)
	await snapshot(page, 'api-keys-inspector')
})

test('[APIK-012] the API reference lists every operation of the OpenAPI document, with no policy violation', async ({
	page,
	request,
}) => {
	// Every Content-Security-Policy violation of the page is collected (the fixture also fails on console errors).
	await page.addInitScript(() => {
		const seen: Array<string> = []
		Object.assign(window, { cspViolations: seen })
		document.addEventListener('securitypolicyviolation', (event) => {
			seen.push(`${event.violatedDirective} ${event.blockedURI}`)
		})
	})
	const openapi = (await (await request.get('/api/v1/openapi.json')).json()) as {
		openapi: string
		info: { title: string; version: string }
		servers: Array<{ url: string }>
		paths: Record<string, Record<string, { operationId: string }>>
	}
	expect(openapi.openapi).toBe('3.1.0')
	const operations = Object.entries(openapi.paths).flatMap(([path, methods]) =>
		Object.keys(methods).map((method) => `${method.toUpperCase()}${openapi.servers[0]!.url}${path}`),
	)
	expect(operations.length).toBeGreaterThan(5)

	await signIn(page, 'reviewer@bandproof.test')
	const pageResponse = page.waitForResponse((candidate) => new URL(candidate.url()).pathname === '/api-docs')
	await page.goto('/api-docs')
	expect((await pageResponse).headers()['content-security-policy']).toMatch(/script-src 'self' 'nonce-/)
	await expect(
		page.getByRole('heading', { level: 1, name: `${openapi.info.title} ${openapi.info.version}` }),
	).toBeVisible()
	const shown = page.getByTestId('api-operation')
	await expect(shown).toHaveCount(operations.length)
	const headings = (await shown.locator('h2').allTextContents()).map((text) => text.replace(/\s+/g, ''))
	expect(headings.sort()).toEqual([...operations].sort())
	expect(await page.evaluate(() => (window as unknown as { cspViolations: Array<string> }).cspViolations)).toEqual([])
	await snapshot(page, 'api-docs')
})
