import { type Page } from '@playwright/test'
import { expect, signIn, snapshot, test } from './fixtures.ts'

// The demo scenario (scripts/demo-scenario.ts) registers isopropyl alcohol as RM-0108 with CAS RN 67-63-0 and one
// specification for it, and three spectra for paracetamol (RM-0102): two references and one incoming lot.

/** Marks the current document: the mark survives client-side navigations and is gone after a full page load. */
async function markDocument(page: Page) {
	await page.evaluate(() => ((window as unknown as { searchMark: string }).searchMark = 'still here'))
}
const documentMark = (page: Page) => page.evaluate(() => (window as unknown as { searchMark?: string }).searchMark)

/** Counts what the browser asks the server from now on: full documents, and React Router data requests for a path. */
function watchRequests(page: Page, pathname: string) {
	const seen = { documents: 0, data: 0, routes: new Set<string>() }
	page.on('request', (request) => {
		const url = new URL(request.url())
		if (request.resourceType() === 'document') seen.documents += 1
		else if (url.pathname === `${pathname}.data`) {
			seen.data += 1
			// React Router names the loaders it asks for; without the parameter it asks every route of the page.
			for (const id of (url.searchParams.get('_routes') ?? 'every route').split(',')) seen.routes.add(id)
		}
	})
	return seen
}

test('[LIB-010] typing in the specification search filters the list without a page load and keeps ?q= in the address', async ({
	page,
}) => {
	await signIn(page, 'reviewer@bandproof.test')
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Specifications' }).click()
	const rows = page.locator('tbody tr')
	await expect(rows.filter({ hasText: 'Identification of paracetamol by ATR-FTIR' })).toBeVisible()
	const before = await rows.count()
	expect(before).toBeGreaterThan(1)
	await markDocument(page)
	const seen = watchRequests(page, '/specifications')

	const search = page.getByRole('searchbox', { name: 'Search' })
	// Part of isopropyl alcohol's CAS RN, typed at a person's pace (60 ms between keys, well inside the pause).
	await search.pressSequentially('67-63', { delay: 60 })
	await expect(page).toHaveURL(/\/specifications\?q=67-63$/)
	await expect(rows).toHaveCount(1)
	await expect(rows.first()).toContainText('Identification of isopropyl alcohol by ATR-FTIR')
	await expect(search).toBeFocused()
	expect(await documentMark(page)).toBe('still here')
	expect(seen.documents).toBe(0)
	// Debounced: five keystrokes, one request (two at most if the machine stalls between keys).
	expect(seen.data).toBeGreaterThanOrEqual(1)
	expect(seen.data).toBeLessThanOrEqual(2)
	// The list's loader answers a search (and the root's, which only reads a pending toast); the sidebar's, the
	// layout's, is not asked again.
	expect([...seen.routes].sort()).toEqual(['root', 'routes/specifications/index'])
	await expect(page.getByRole('status').filter({ hasText: '1 specification found' })).toBeAttached()
	await snapshot(page, 'specifications-live-search')

	// Case does not matter; a search that matches nothing says so plainly.
	await search.fill('ISOPROPYL')
	await expect(page).toHaveURL(/\?q=ISOPROPYL$/)
	await expect(rows).toHaveCount(1)
	await search.fill('no such material')
	await expect(page.getByRole('heading', { name: 'No specification matches “no such material”' })).toBeVisible()
	await expect(page.getByRole('status').filter({ hasText: '0 specifications found' })).toBeAttached()
	await snapshot(page, 'specifications-no-match')
	expect(await documentMark(page)).toBe('still here')

	// The address alone reproduces the result: a reload (a full page load) shows the same list and search text.
	await page.reload()
	await expect(page.getByRole('heading', { name: 'No specification matches “no such material”' })).toBeVisible()
	await expect(page.getByRole('searchbox', { name: 'Search' })).toHaveValue('no such material')

	// Clear filters is a link: the list and the box both come back empty.
	await page.getByRole('link', { name: 'Clear filters' }).click()
	await expect(page).toHaveURL(/\/specifications$/)
	await expect(rows).toHaveCount(before)
	await expect(page.getByRole('searchbox', { name: 'Search' })).toHaveValue('')
})

test('[LIB-011] the spectra library filters by material name as you type; Back returns to the whole library', async ({
	page,
}) => {
	await signIn(page, 'author@bandproof.test')
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Spectra' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'Spectra' })).toBeVisible()
	await markDocument(page)
	const rows = page.locator('tbody tr')
	// A slow answer (held back here by 800 ms) shows that the search is on its way.
	await page.route(/\/spectra\.data/, async (route) => {
		await new Promise((resolve) => setTimeout(resolve, 800))
		await route.continue()
	})
	await page.getByRole('searchbox', { name: 'Search' }).pressSequentially('paracet', { delay: 40 })
	await expect(page.getByText('Searching…')).toBeVisible()
	await snapshot(page, 'spectra-searching')
	await expect(page).toHaveURL(/\/spectra\?q=paracet$/)
	await expect(page.getByText('Searching…')).toBeHidden()
	await page.unrouteAll()
	// The demo's paracetamol spectra (references, samples of its lots) fill the page; nothing else is listed.
	await expect(rows.filter({ hasNotText: 'RM-0102 · Paracetamol' })).toHaveCount(0)
	await expect(rows.first()).toContainText('RM-0102 · Paracetamol')
	expect(await documentMark(page)).toBe('still here')
	await snapshot(page, 'spectra-live-search')

	// One history entry for the whole search: Back leaves it, and the box follows the address.
	await page.goBack()
	await expect(page).toHaveURL(/\/spectra$/)
	await expect(page.getByRole('searchbox', { name: 'Search' })).toHaveValue('')
	await expect(rows.filter({ hasNotText: 'RM-0102 · Paracetamol' }).first()).toBeVisible()
	expect(await documentMark(page)).toBe('still here')
})

test('[LIB-012] without JavaScript the search is a plain GET form with the same results', async ({ browser }) => {
	const context = await browser.newContext({ javaScriptEnabled: false })
	const page = await context.newPage()
	await signIn(page, 'reviewer@bandproof.test')
	await page.goto('/specifications')
	await page.getByRole('searchbox', { name: 'Search' }).fill('67-63')
	await page.getByRole('searchbox', { name: 'Search' }).press('Enter')
	await expect(page).toHaveURL(/\/specifications\?q=67-63/)
	await expect(page.locator('tbody tr')).toHaveCount(1)
	await expect(page.locator('tbody tr').first()).toContainText('Identification of isopropyl alcohol by ATR-FTIR')
	await context.close()
})
