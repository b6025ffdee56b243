import { expect, signIn, snapshot, test } from './fixtures.ts'

// The sidebar's queue count comes with the page and is then kept fresh by a fetcher on /queue/count (every minute
// while the tab is visible, and when the window gets focus), without reloading or navigating the page.

test('[QUE-011] a draft started in another tab shows in the queue count when the first tab gets focus again', async ({
	page,
	context,
}) => {
	await signIn(page, 'author@bandproof.test')
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Spectra' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'Spectra' })).toBeVisible()
	const badge = page.getByRole('navigation', { name: 'Main' }).getByTestId('queue-count')
	const before = Number((await badge.count()) ? await badge.textContent() : 0)
	await page.evaluate(() => Object.assign(window, { queueMark: 'same document' }))

	// A second tab of the same session starts a specification: a new draft waits for its author.
	const other = await context.newPage()
	await other.goto('/specifications/new')
	await other.getByLabel('Material').selectOption({ label: 'RM-0109 · Benzaldehyde' })
	await other.getByLabel('Title').fill('Identification of benzaldehyde by ATR-FTIR')
	await other.getByRole('button', { name: 'Create specification' }).click()
	await expect(
		other.getByRole('heading', { level: 1, name: 'Identification of benzaldehyde by ATR-FTIR' }),
	).toBeVisible()
	await other.close()

	// Back to the first tab: focus brings the count up to date through /queue/count, with no navigation.
	await page.bringToFront()
	const poll = page.waitForResponse((response) => new URL(response.url()).pathname.startsWith('/queue/count'))
	await page.evaluate(() => window.dispatchEvent(new Event('focus')))
	expect((await poll).status()).toBe(200)
	await expect(badge).toHaveText(String(before + 1))
	await expect(
		page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: `My queue , ${before + 1} waiting` }),
	).toBeVisible()
	expect(await page.evaluate(() => (window as unknown as { queueMark?: string }).queueMark)).toBe('same document')
	await expect(page).toHaveURL(/\/spectra$/)
	await snapshot(page, 'queue-count-refreshed')
})
