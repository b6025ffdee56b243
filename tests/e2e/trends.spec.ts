import { expect, signIn, snapshot, test } from './fixtures.ts'

// The demo scenario records identity runs of paracetamol and isopropyl alcohol (scripts/demo-runs.ts), so the page
// must show a chart; an empty state here means the trend lost its data.

test('[TRD-E01] lab staff reach Trends from the navigation: a material picker and the chart with its table', async ({
	page,
}) => {
	await signIn(page, 'reviewer@bandproof.test')
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Trends' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'Trends' })).toBeVisible()
	const picker = page.getByLabel('Material', { exact: true })
	await expect(picker).toBeVisible()
	await expect(page.getByRole('button', { name: 'Show trend' })).toBeVisible()

	const chart = page.getByRole('img', { name: /^Correlation of container samples with the reference over time/ })
	const empty = page.getByRole('heading', { name: /^No identity run/ })
	await expect(chart).toBeVisible()
	await expect(empty).toHaveCount(0)
	// The description under the heading states the count; the table holds exactly that many container rows.
	const summary = await page.locator('section', { has: chart }).locator('p').first().textContent()
	const count = Number(/^(\d+) containers?/.exec(summary ?? '')?.[1])
	expect(count).toBeGreaterThan(0)
	const table = page.getByRole('table', { name: /^Container results of/ })
	await expect(table.locator('tbody tr')).toHaveCount(count)
	// Every supplier in the table is in the legend.
	const suppliers = new Set(await table.locator('tbody tr td:nth-child(4)').allTextContents())
	const legend = page.getByRole('list', { name: 'Suppliers' })
	for (const supplier of suppliers) await expect(legend.getByText(supplier, { exact: true })).toBeVisible()
	// Pointing at a point names it: run, container, correlation.
	// The last point is drawn last, so nothing covers it.
	await page.getByTestId('trend-point').last().locator('path').hover()
	await expect(page.getByRole('tooltip')).toContainText(/IDR-\d{4}-\d{4} · container \d+/)
	await snapshot(page, 'trends-chart')
})

test('[TRD-E02] without JavaScript the picker is a plain form: the choice lands in the address', async ({
	browser,
}) => {
	const context = await browser.newContext({ javaScriptEnabled: false })
	const page = await context.newPage()
	await signIn(page, 'author@bandproof.test')
	await page.goto('/trends')
	const picker = page.getByLabel('Material', { exact: true })
	const options = await picker
		.locator('option')
		.evaluateAll((nodes) => nodes.map((node) => (node as HTMLOptionElement).value).filter(Boolean))
	expect(options.length).toBeGreaterThan(1)
	const last = options.at(-1)!
	await picker.selectOption(last)
	await page.getByRole('button', { name: 'Show trend' }).click()
	await expect(page).toHaveURL(new RegExp(`/trends\\?material=${last}$`))
	await expect(picker).toHaveValue(last)
	await context.close()
})

test('[TRD-E03] an inspector has no Trends entry and is refused the page', async ({ page }) => {
	await signIn(page, 'inspector@bandproof.test')
	await expect(page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Trends' })).toHaveCount(0)
	const response = await page.goto('/trends')
	expect(response?.status()).toBe(403)
	await expect(page.getByText(/run:read/)).toBeVisible()
})
