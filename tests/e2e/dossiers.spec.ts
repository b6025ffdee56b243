import { createHash } from 'node:crypto'
import { readFile } from 'node:fs/promises'
import { type Page } from '@playwright/test'
import { expect, signIn, snapshot, test } from './fixtures.ts'
import { pdfPageTexts } from '#tests/support/pdf-text.ts'

// The demo scenario (scripts/demo-scenario.ts) stores the dossiers of QC-IR-0001 ("Identification of paracetamol by
// ATR-FTIR") v1 (superseded) and v2 (effective) at seed time; QC-IR-0003 (acetylsalicylic acid) is a version 1 in
// review, which no journey changes, so these tests do not depend on the order in which files run.

const sha256 = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex')

type Downloaded = { bytes: Buffer; fileName: string; path: string; sha256: string }

/** Clicks a download link of the Dossier section and keeps the file under the test's output folder. */
async function download(page: Page, name: 'Download PDF' | 'Download DOCX', keepAs: string): Promise<Downloaded> {
	const dossier = page.getByRole('region', { name: 'Dossier' })
	const [file] = await Promise.all([
		page.waitForEvent('download'),
		dossier.getByRole('link', { name, exact: true }).click(),
	])
	expect(await file.failure()).toBeNull()
	const path = test.info().outputPath(keepAs)
	await file.saveAs(path)
	const bytes = await readFile(path)
	return { bytes, fileName: file.suggestedFilename(), path, sha256: sha256(bytes) }
}

async function openSpecification(page: Page, documentNumber: string) {
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Specifications' }).click()
	await page.getByRole('link', { name: documentNumber, exact: true }).click()
	await expect(page.getByRole('region', { name: 'Dossier' })).toBeVisible()
}

/** Uploads a copy on "Verify a copy" and returns the result region. */
async function verifyFile(page: Page, file: string | { name: string; mimeType: string; buffer: Buffer }) {
	await page.goto('/verify')
	await expect(page.getByRole('heading', { level: 1, name: 'Verify a copy' })).toBeVisible()
	await page.getByLabel('The copy (PDF or DOCX)').setInputFiles(file)
	await page.getByRole('button', { name: 'Check the copy' }).click()
	const result = page.getByTestId('verify-result')
	await expect(result).toBeVisible()
	return result
}

/** The definition list of a match: Document, Version, Format, Template, SHA-256. */
function matchDetail(page: Page, term: string) {
	return page.getByTestId('verify-result').locator('dt', { hasText: term }).locator('+ dd')
}

test('[DOS-E2E-001] an approver downloads the effective paracetamol dossier as PDF and DOCX, byte-identical every time, and "Verify a copy" recognises each', async ({
	page,
}) => {
	test.setTimeout(120_000)
	await signIn(page, 'approver@bandproof.test')
	await openSpecification(page, 'QC-IR-0001')
	await expect(page).toHaveTitle('QC-IR-0001 v2 (Effective) · Bandproof')
	await expect(page.getByRole('region', { name: 'Dossier' })).toContainText(
		'rendered once and stored, so every download is the same file',
	)
	await snapshot(page, 'dossier-effective-version')

	// Stored and repeatable (issue 6 item 3; PRODUCT.md §6): two downloads of each format are the same bytes.
	const pdf = await download(page, 'Download PDF', 'first.pdf')
	const pdfAgain = await download(page, 'Download PDF', 'second.pdf')
	const docx = await download(page, 'Download DOCX', 'first.docx')
	const docxAgain = await download(page, 'Download DOCX', 'second.docx')
	expect(pdf.fileName).toMatch(/^QC-IR-0001.*\.pdf$/)
	expect(docx.fileName).toMatch(/^QC-IR-0001.*\.docx$/)
	expect(pdf.bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-')
	expect(docx.bytes.subarray(0, 2).toString('latin1')).toBe('PK') // a DOCX is a ZIP package (ECMA-376 Part 2, from memory)
	expect(pdfAgain.sha256).toBe(pdf.sha256)
	expect(docxAgain.sha256).toBe(docx.sha256)
	expect(pdf.sha256).not.toBe(docx.sha256)

	// What the approver filed reads as a controlled copy: the signature manifest (21 CFR 11.50(b) — FACTS.md §3.1: name,
	// date and time, meaning in every human-readable form), page numbering on every page, and no DRAFT mark (PRODUCT.md §6).
	const pages = await pdfPageTexts(pdf.bytes)
	expect(pages.length).toBeGreaterThan(1)
	const whole = pages.join('\n')
	expect(whole).toContain('QC-IR-0001')
	expect(whole).toContain('Tomasz Wielgosz')
	expect(whole).toContain('Ilse Brandvold')
	expect(whole).toMatch(/\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} UTC/)
	pages.forEach((text, index) => expect(text, `page ${index + 1}`).toContain(`Page ${index + 1} of ${pages.length}`))
	for (const text of pages) expect(text).not.toMatch(/\bDRAFT\b/)

	// Verify a copy (issue 6 item 4): each downloaded file is recognised, naming document, version and template.
	for (const copy of [pdf, docx]) {
		const result = await verifyFile(page, copy.path)
		await expect(result).toContainText('Matches')
		await expect(result).toContainText('This copy is exactly as Bandproof issued it.')
		await expect(matchDetail(page, 'Document')).toHaveText('QC-IR-0001 · Identification of paracetamol by ATR-FTIR')
		await expect(matchDetail(page, 'Version')).toHaveText('2 (Effective when issued)')
		await expect(matchDetail(page, 'Format')).toContainText(copy === pdf ? 'PDF' : 'DOCX')
		await expect(matchDetail(page, 'Template')).toHaveText(/\S+ \S+ \([0-9a-f]{64}\)/)
		await expect(matchDetail(page, 'SHA-256')).toHaveText(copy.sha256)
		await snapshot(page, `dossier-verify-match-${copy === pdf ? 'pdf' : 'docx'}`)
	}

	// A copy changed by one byte is refused. The byte changed sits in the middle of the file, not in a signature.
	const tampered = Buffer.from(pdf.bytes)
	const middle = Math.floor(tampered.length / 2)
	tampered[middle] = tampered[middle]! ^ 0x01
	const refused = await verifyFile(page, { name: pdf.fileName, mimeType: 'application/pdf', buffer: tampered })
	await expect(refused).toContainText('No match')
	await expect(refused).toContainText(`SHA-256 ${sha256(tampered)} of ${pdf.fileName}`)
	await expect(refused).not.toContainText('Matches')
	await snapshot(page, 'dossier-verify-one-byte-changed')

	// Typing the hash works too: upper case with spaces every 8 digits, as people copy it from paper.
	await page.goto('/verify')
	const spaced = docx.sha256
		.toUpperCase()
		.replace(/(.{8})/g, '$1 ')
		.trim()
	await page.getByLabel('Its SHA-256').fill(spaced)
	await page.getByRole('button', { name: 'Check the copy' }).click()
	await expect(page.getByTestId('verify-result')).toContainText('Matches')
	await expect(matchDetail(page, 'Document')).toContainText('QC-IR-0001')
	await expect(matchDetail(page, 'Format')).toContainText('DOCX')
	await expect(matchDetail(page, 'SHA-256')).toHaveText(docx.sha256)
	// A typed hash that is not 64 hexadecimal digits is refused with the rule.
	await page.getByLabel('Its SHA-256').fill('not-a-hash')
	await page.getByRole('button', { name: 'Check the copy' }).click()
	await expect(page.getByRole('alert')).toContainText('A SHA-256 is 64 hexadecimal digits')
})

test('[DOS-E2E-002] a draft dossier carries DRAFT on every page, is not recognised as a controlled copy, and the preview shows the PDF in the page', async ({
	page,
}) => {
	test.setTimeout(120_000)
	await signIn(page, 'approver@bandproof.test')
	await openSpecification(page, 'QC-IR-0003')
	await expect(page).toHaveTitle('QC-IR-0003 v1 (In review) · Bandproof')
	await expect(page.getByRole('region', { name: 'Dossier' })).toContainText(
		'every page carries a DRAFT mark. It is not a controlled copy.',
	)

	// PRODUCT.md §6 and issue 6 item 2: a version not yet effective carries a DRAFT mark on every page, with "Page X of Y".
	const draft = await download(page, 'Download PDF', 'draft.pdf')
	expect(draft.fileName).toMatch(/^QC-IR-0003.*\.pdf$/)
	const pages = await pdfPageTexts(draft.bytes)
	expect(pages.length).toBeGreaterThan(0)
	pages.forEach((text, index) => expect(text, `page ${index + 1}`).toMatch(/\bDRAFT\b/))
	expect(pages[0]).toContain('Page 1 of')
	pages.forEach((text, index) => expect(text, `page ${index + 1}`).toContain(`Page ${index + 1} of ${pages.length}`))

	// Drafts are rendered on demand and never stored, so a draft cannot pass for an issued copy.
	const result = await verifyFile(page, draft.path)
	await expect(result).toContainText('No match')
	await expect(result).toContainText('it is a draft rendered on demand')

	// The preview: the PDF inside the page, served inline.
	await openSpecification(page, 'QC-IR-0003')
	await expect(page).toHaveTitle('QC-IR-0003 v1 (In review) · Bandproof')
	const dossier = page.getByRole('region', { name: 'Dossier' })
	await dossier.getByRole('button', { name: 'Preview' }).click()
	const frame = dossier.locator('iframe[title="Dossier preview"]')
	await expect(frame).toBeVisible()
	await expect(dossier.getByRole('button', { name: 'Hide the preview' })).toHaveAttribute('aria-expanded', 'true')
	const src = await frame.getAttribute('src')
	expect(src).toMatch(/\/dossier\/pdf\?inline=1$/)
	const inline = await page.request.get(src!)
	expect(inline.status()).toBe(200)
	expect(inline.headers()['content-type']).toBe('application/pdf')
	expect(inline.headers()['content-disposition']).toMatch(/^inline;/)
	// Once the frame has loaded, the "Preparing the dossier…" note goes away.
	await expect(dossier.getByRole('status')).toHaveCount(0, { timeout: 20_000 })
	await dossier.scrollIntoViewIfNeeded()
	await snapshot(page, 'dossier-draft-preview')
})
