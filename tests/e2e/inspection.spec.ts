import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs'
import { readFile } from 'node:fs/promises'
import { expect, signIn, snapshot, test } from './fixtures.ts'

// The demo inspector holds a current grant over QC-IR-0001 and QC-IR-0002 and an ended one (scripts/demo-scenario.ts).
test('[INS-E2E-001] an inspector reads and downloads only what the grant covers, with an "issued to" line on the copy', async ({
	page,
}) => {
	test.setTimeout(120_000)
	await signIn(page, 'inspector@bandproof.test')
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Inspection' }).click()
	await expect(page.getByRole('list', { name: 'Your access grants' })).toContainText(
		'Regulatory GMP inspection, December 2026',
	)
	const rows = page.locator('tbody tr')
	await expect(rows.filter({ hasText: 'QC-IR-0001' })).toHaveCount(2)
	await expect(rows.filter({ hasText: 'QC-IR-0002' })).toHaveCount(1)
	// Drafts, versions in review and uncovered specifications are not listed (PRODUCT.md §2).
	await expect(rows.filter({ hasText: 'QC-IR-0003' })).toHaveCount(0)
	await expect(rows.filter({ hasText: 'QC-IR-0004' })).toHaveCount(0)
	await snapshot(page, 'inspection-list')

	await rows.filter({ hasText: 'Effective' }).filter({ hasText: 'QC-IR-0001' }).getByRole('link').click()
	await expect(page.getByRole('heading', { name: 'Signatures' })).toBeVisible()
	await expect(page.getByRole('heading', { name: 'Audit extract' })).toBeVisible()
	await expect(page.getByText('Your next step')).toHaveCount(0)
	await snapshot(page, 'inspection-version')

	const [download] = await Promise.all([
		page.waitForEvent('download'),
		page.getByRole('link', { name: 'Download PDF' }).click(),
	])
	const bytes = await readFile((await download.path())!)
	const pdf = await getDocument({ data: new Uint8Array(bytes), isEvalSupported: false }).promise
	const first = (await (await pdf.getPage(1)).getTextContent()).items
		.map((item) => ('str' in item ? item.str : ''))
		.join(' ')
	expect(first).toContain('Issued to Rafael Quintero')
	expect(first).toContain('for inspection')

	// Everything else is refused on the server, whatever the address.
	expect((await page.goto('/specifications'))?.status()).toBe(403)
	const outside = await page.request.post('/materials/new', { form: { code: 'X-1', name: 'Nope' } })
	expect(outside.status()).toBe(403)
})
