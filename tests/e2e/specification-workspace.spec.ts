import { referenceSpectraDir } from '#tests/support/reference-spectra.ts'
import path from 'node:path'
import { expect, signIn, snapshot, test } from './fixtures.ts'

// Real spectra from the shared reference set (see its SOURCES.md): the two 4-chloroaniline files are the same
// measurement in different encodings; 3-chloroaniline is a positional isomer ("must not match").
const spectrum = (relative: string) => path.join(referenceSpectraDir(), relative)

test('[WS-001] an author goes from an empty library to a draft with reference, band table and evidence', async ({
	page,
}) => {
	test.setTimeout(180_000)
	await signIn(page, 'author@bandproof.test')

	// A material of our own for this journey. 106-47-8 is 4-chloroaniline's CAS RN (from memory; its check digit passes).
	await page.goto('/materials/new')
	await page.getByLabel('Material code').fill('RM-0401')
	await page.getByLabel('Name').fill('4-Chloroaniline')
	await page.getByLabel('CAS Registry Number').fill('106-47-8')
	await page.getByRole('button', { name: 'Register material' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'RM-0401 · 4-Chloroaniline' })).toBeVisible()

	// Upload a batch with one broken file: the broken one is refused with the importer's message, the others are stored.
	await page.goto('/spectra/upload')
	await page
		.getByLabel('Spectrum files')
		.setInputFiles([
			spectrum('compounds/4_chloroaniline_solid_pe1000.jdx'),
			spectrum('format/malformed/ycheck_mismatch.jdx'),
			spectrum('compounds/3_chloroaniline_pe1000.jdx'),
		])
	await page.getByLabel('Material', { exact: true }).selectOption({ label: 'RM-0401 · 4-Chloroaniline' })
	await page.getByLabel('Reference standard lot').fill('CV-RS-0401-02')
	await page.getByRole('button', { name: 'Upload' }).click()
	const results = page.getByRole('region', { name: 'Upload results' })
	await expect(page.getByText('3 of 3 files')).toBeVisible()
	await expect(results.locator('li', { hasText: 'ycheck_mismatch.jdx' })).toContainText('Refused')
	await expect(results.locator('li', { hasText: 'ycheck_mismatch.jdx' })).toContainText('DIF check value')
	await expect(results.locator('li', { hasText: '4_chloroaniline_solid_pe1000.jdx' })).toContainText('Stored')
	await expect(results.locator('li', { hasText: '3_chloroaniline_pe1000.jdx' })).toContainText('Stored')
	await snapshot(page, 'upload-results')

	// The same bytes again are recognised, not stored twice; the sample to compare is a second encoding of the reference.
	await page
		.getByLabel('Spectrum files')
		.setInputFiles([
			spectrum('compounds/4_chloroaniline_solid_pe1000.jdx'),
			spectrum('compounds/4_chloroaniline_solid_pe1000_single.jdx'),
		])
	await page.getByLabel('Purpose').selectOption('sample')
	await page.getByRole('button', { name: 'Upload' }).click()
	await expect(results.locator('li', { hasText: '4_chloroaniline_solid_pe1000.jdx' })).toContainText('Already stored')
	await expect(results.locator('li', { hasText: '4_chloroaniline_solid_pe1000_single.jdx' })).toContainText('Stored')

	// The library shows them; a spectrum's page draws the chart after hydration.
	await page.getByRole('link', { name: 'Back to the library' }).click()
	await page.getByRole('link', { name: '4_chloroaniline_solid_pe1000.jdx' }).click()
	await expect(page.getByRole('heading', { name: 'Functional-group suggestions' })).toBeVisible()
	await expect(page.locator('svg path').first()).toBeVisible()
	await snapshot(page, 'spectrum-page')

	// A specification for the material.
	await page.goto('/specifications/new')
	await page.getByLabel('Material').selectOption({ label: 'RM-0401 · 4-Chloroaniline' })
	await page.getByLabel('Title').fill('Identification of 4-chloroaniline by FTIR')
	await page.getByRole('button', { name: 'Create specification' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'Identification of 4-chloroaniline by FTIR' })).toBeVisible()
	await page.getByLabel('Reference spectrum').selectOption({ label: '4_chloroaniline_solid_pe1000.jdx (RM-0401)' })
	await page.getByLabel('Scope').fill('Incoming lots of 4-chloroaniline, all suppliers.')
	await page.getByLabel('Range from (cm⁻¹)').fill('450')
	await page.getByRole('button', { name: 'Save draft' }).click()
	await expect(page.getByTestId('draft-revision')).toContainText('Revision 2')

	// Band table from the reference's peaks.
	await page.getByRole('button', { name: 'Suggest from the reference' }).click()
	await page.getByRole('button', { name: 'Add all suggested bands' }).click()
	await expect(page.getByLabel('Position of band 1', { exact: true })).not.toHaveValue('')
	const bandCount = await page.getByLabel(/^Position of band/).count()
	expect(bandCount).toBeGreaterThan(3)
	await page.getByRole('button', { name: 'Save draft' }).click()
	await expect(page.getByTestId('draft-revision')).toContainText('Revision 3')
	await page.reload()
	await expect(page.getByLabel(/^Position of band/)).toHaveCount(bandCount)
	await snapshot(page, 'workspace-draft')

	// A conforming comparison (same measurement, other encoding) and a non-conforming one (positional isomer).
	await page
		.getByLabel('Compare a stored spectrum with the reference')
		.selectOption({ label: '4_chloroaniline_solid_pe1000_single.jdx (RM-0401)' })
	await page.getByRole('button', { name: 'Compare' }).click()
	await expect(page.getByText('Comparison recorded')).toBeVisible()
	const first = page.getByTestId('evidence-item').first()
	await expect(first).toContainText('Conforms')
	await page
		.getByLabel('Compare a stored spectrum with the reference')
		.selectOption({ label: '3_chloroaniline_pe1000.jdx (RM-0401)' })
	await page.getByRole('button', { name: 'Compare' }).click()
	await expect(page.getByTestId('evidence-item').first()).toContainText('Does not conform')
	await page.getByTestId('evidence-item').first().getByRole('button', { name: 'Show the overlay' }).click()
	await expect(page.getByTestId('evidence-item').first().locator('svg path').first()).toBeVisible()
	await page.getByTestId('evidence-item').first().scrollIntoViewIfNeeded()
	await snapshot(page, 'workspace-evidence-overlay')

	await page.getByRole('button', { name: 'Check specificity' }).click()
	await expect(page.getByText('Specificity check recorded')).toBeVisible()
})

test('[WS-002] a reviewer reads a specification but the server refuses their edits', async ({ page }) => {
	await signIn(page, 'reviewer@bandproof.test')
	const response = await page.goto('/specifications/new')
	expect(response?.status()).toBe(403)
})
