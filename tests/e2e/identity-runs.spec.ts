import { type Page } from '@playwright/test'
import { expect, signIn, signOut, snapshot, test } from './fixtures.ts'
import { replicateOfFile } from '#tests/support/container-samples.ts'

// Demo scenario (scripts/demo-scenario.ts, scripts/demo-runs.ts): QC-IR-0002 isopropyl alcohol is effective with a
// synthetic reference spectrum; IR-02 passed its polystyrene check three days ago, IR-01's check has expired;
// analyst@ (Nadia Haddad) and analyst2@ (Cormac Delaney) are the analysts. The container samples are replicates
// of that reference (the demo's own data, downloaded through the app) with seeded noise: this journey tests the
// pages and the signatures; the verdicts on real spectra are tested in tests/integration/identity-runs.test.ts.

async function referenceFileOf(page: Page, documentNumber: string): Promise<{ bytes: Uint8Array; name: string }> {
	await page.goto('/specifications')
	await page.getByRole('link', { name: documentNumber, exact: true }).click()
	const referenceLink = page.getByRole('link', { name: /\.(jdx|dx|csv)$/ }).first()
	const href = await referenceLink.getAttribute('href')
	expect(href).toMatch(/^\/spectra\/[0-9a-f-]{36}$/)
	const response = await page.request.get(`${href}/original`)
	expect(response.ok()).toBe(true)
	return { bytes: new Uint8Array(await response.body()), name: (await referenceLink.textContent()) ?? 'reference.jdx' }
}

/** Chooses the option of a labelled select whose text matches. */
async function choose(page: Page, label: string, text: RegExp) {
	const select = page.getByLabel(label)
	const value = await select.getByRole('option', { name: text }).getAttribute('value')
	await select.selectOption(value!)
}

test('an analyst records a five-container lot, signs it, and a second analyst verifies it', async ({ page }) => {
	const lotNumber = `E2E-${Date.now().toString(36).toUpperCase()}`
	await signIn(page, 'analyst@bandproof.test')
	const reference = await referenceFileOf(page, 'QC-IR-0002')
	const files = [1, 2, 3, 4, 5].map((container) => ({
		name: `${lotNumber}-C0${container}.jdx`,
		mimeType: 'chemical/x-jcamp-dx',
		buffer: Buffer.from(replicateOfFile(reference.bytes, reference.name, (Date.now() % 100000) + container, 0.001)),
	}))

	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Lots and runs' }).click()
	await page.getByRole('link', { name: 'Test a new lot' }).click()
	await choose(page, 'Specification', /QC-IR-0002/)
	await page.getByLabel('Lot number').fill(lotNumber)
	await page.getByLabel('Supplier').fill('Halden Chemie')
	await page.getByLabel('Number of containers').fill('5')
	// The instrument whose check expired is listed but cannot be chosen.
	await expect(page.getByRole('option', { name: /IR-01.*not usable: check expired/ })).toBeDisabled()
	await choose(page, 'Instrument', /^IR-02/)
	await page.getByLabel('Sample spectra, one per container').setInputFiles(files)
	await expect(page.getByText('Every container from 1 to 5 has exactly one file.')).toBeVisible()
	await snapshot(page, 'run-new-lot')
	await page.getByRole('button', { name: 'Record and compare' }).click()

	await expect(page.getByRole('heading', { level: 1, name: /^Identity run IDR-\d{4}-\d{4}$/ })).toBeVisible()
	const runUrl = page.url()
	const containers = page.getByTestId('containers')
	await expect(containers.getByRole('row')).toHaveCount(6)
	await expect(containers.getByText('Conforms', { exact: true })).toHaveCount(5)
	await expect(page.getByTestId('run-status')).toContainText('All containers conform')
	await page.getByLabel('Password').fill('calder-vale-demo')
	await page.getByRole('button', { name: 'Sign as performed' }).click()
	await expect(page.getByTestId('signatures')).toContainText('Nadia Haddad · Performed')
	// The performer is not offered the verification.
	await expect(page.getByRole('button', { name: 'Verify this run' })).toHaveCount(0)
	await snapshot(page, 'run-performed')

	// Every number behind a verdict is one click away, and it is the same number as in the run's table.
	const third = containers.getByRole('row').filter({ has: page.getByRole('link', { name: 'Evidence of container 3' }) })
	const tableCorrelation = (await third.getByRole('cell').nth(3).textContent())!.trim()
	expect(Number(tableCorrelation)).toBeGreaterThan(0.95)
	await containers.getByRole('link', { name: 'Evidence of container 3' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'Container 3 of 5' })).toBeVisible()
	await expect(page.getByTestId('correlation')).toHaveText(tableCorrelation)
	await snapshot(page, 'run-container-evidence')

	await signOut(page)
	await signIn(page, 'analyst2@bandproof.test')
	await page.goto(runUrl)
	await page.getByLabel('Password').fill('calder-vale-demo')
	await page.getByRole('button', { name: 'Verify this run' }).click()
	await expect(page.getByTestId('signatures')).toContainText('Cormac Delaney · Verified')
	await expect(page.getByTestId('run-status')).toContainText('Verified')
	await page.getByRole('link', { name: lotNumber }).click()
	await expect(page.getByText('Identity confirmed')).toBeVisible()
	await snapshot(page, 'run-lot-released')
})

test('a lot with a container of another material is flagged for investigation, and an expired instrument says what to do', async ({
	page,
}) => {
	const lotNumber = `E2F-${Date.now().toString(36).toUpperCase()}`
	await signIn(page, 'analyst@bandproof.test')
	const reference = await referenceFileOf(page, 'QC-IR-0002')
	const otherMaterial = await referenceFileOf(page, 'QC-IR-0001')
	const files = [
		{ source: reference, container: 1 },
		{ source: otherMaterial, container: 2 },
		{ source: reference, container: 3 },
	].map(({ source, container }) => ({
		name: `${lotNumber}-C0${container}.jdx`,
		mimeType: 'chemical/x-jcamp-dx',
		buffer: Buffer.from(replicateOfFile(source.bytes, source.name, (Date.now() % 100000) + 50 + container, 0.001)),
	}))
	await page.goto('/lots/new')
	await choose(page, 'Specification', /QC-IR-0002/)
	await page.getByLabel('Lot number').fill(lotNumber)
	await page.getByLabel('Supplier').fill('Orwell Fine Synthesis')
	await page.getByLabel('Number of containers').fill('3')
	await choose(page, 'Instrument', /^IR-02/)
	await page.getByLabel('Sample spectra, one per container').setInputFiles(files)
	await page.getByRole('button', { name: 'Record and compare' }).click()
	await expect(page.getByTestId('run-status')).toContainText('Flagged for investigation')
	await expect(page.getByRole('region', { name: 'Investigation' })).toContainText(
		'Container 2 of 3 does not clearly conform.',
	)
	const second = page.getByTestId('containers').getByRole('row').nth(2)
	await expect(second).toContainText('Does not conform')
	await snapshot(page, 'run-flagged')

	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Instruments' }).click()
	await page.getByRole('link', { name: 'IR-01', exact: true }).click()
	await expect(page.getByTestId('readiness-message')).toContainText(/expired on \d{4}-\d{2}-\d{2}\. Record a new check/)
	await snapshot(page, 'instrument-expired')
})
