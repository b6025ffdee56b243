/**
 * The PDF dossier, read back the way a reader's software reads it: text extracted with pdfjs-dist, the font and
 * image objects inspected with pdf-lib, and every page rasterised with poppler's pdftoppm (PNGs are written to
 * screenshots/dossier/pdf/, git-ignored, for a person to look at).
 */
import { execFileSync } from 'node:child_process'
import { createHash } from 'node:crypto'
import { mkdirSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import { PDFDict, PDFDocument, PDFName, PDFRawStream } from 'pdf-lib'
import { expect, test } from 'vitest'
import { identifyDossier } from '#shared/dossier/identify.ts'
import { DossierDataSchema } from '#shared/dossier/model.ts'
import { renderDossier } from '#app/.server/render/dossier.ts'
import { loadTemplate, templateDir } from '#app/.server/render/template.ts'
import {
	draftData,
	pdfPageItems,
	pdfPageTexts,
	sampleData,
	squash,
	withBands,
	withEvidence,
} from '#tests/unit/dossier/support.ts'

const template = await loadTemplate(templateDir('dossier'))
const sample = DossierDataSchema.parse(sampleData())
const effective = await renderDossier(sampleData(), { format: 'pdf', template })
const draft = await renderDossier(draftData(), { format: 'pdf', template })
const effectivePages = await pdfPageTexts(effective.bytes)
const draftPages = await pdfPageTexts(draft.bytes)

function hasPoppler(): boolean {
	try {
		execFileSync('pdftoppm', ['-v'], { stdio: 'ignore' })
		return true
	} catch {
		return false
	}
}

test('[DOS-001] the signature manifest shows each printed name, meaning, and date and time with zone — 21 CFR 11.50(a)(1)–(3), FACTS.md §3.1 [READ-2°]', () => {
	const page = effectivePages[0]!
	expect(page).toContain('Signature manifest')
	for (const [signature, meaning] of sample.signatures.map(
		(s, i) => [s, ['Authored', 'Reviewed', 'Approved'][i]!] as const,
	)) {
		expect(page).toContain(signature.printedName)
		expect(page).toContain(meaning)
		expect(squash(page)).toContain(squash(`${signature.localTime} (${signature.signerTimeZone})`))
		expect(squash(page)).toContain(
			squash(`${signature.signedAtUtc.slice(0, 10)} ${signature.signedAtUtc.slice(11, 19)} UTC`),
		)
	}
	// The zones differ between signers here (GMT and CET): each line carries its own.
	expect(page).toContain('CET')
	expect(page).toContain('Europe/Warsaw')
})

test('[DOS-002] the manifest is in the printout of a draft too — 21 CFR 11.50(b), every human-readable form, FACTS.md §3.1 [READ]', () => {
	for (const signature of sample.signatures) expect(draftPages[0]).toContain(signature.printedName)
})

test('[DOS-003] every band-table row is printed: position, tolerance, assignment, intensity, shape, required', () => {
	const text = effectivePages.join(' ')
	for (const band of sample.bands) {
		expect(text).toContain(band.position.toFixed(1))
		expect(text).toContain(band.tolerance.toFixed(1))
		expect(squash(text)).toContain(squash(band.assignment))
	}
	expect(text).toContain('very strong')
	expect(text).toMatch(/Position \(cm⁻¹\)/)
})

test('[DOS-004] the content hash, the template that made the document and how to verify it are printed', () => {
	const text = squash(effectivePages.join(' '))
	expect(text).toContain(sample.contentSha256)
	expect(text).toContain(template.sha256)
	expect(text).toContain(squash(`${template.id} ${template.version}`))
	expect(text).toContain(squash('Verify a copy'))
	expect(text).toContain(squash(sample.verification.url!))
})

test('[DOS-005] every page carries the document number, version, "Page X of Y" and the controlled-copy notice — PRODUCT.md §6', () => {
	expect(effectivePages.length).toBeGreaterThanOrEqual(4)
	effectivePages.forEach((page, index) => {
		expect(page).toContain(`CVP-QC-IR-0142 · Version 3 · Effective`)
		expect(page).toContain(`Page ${index + 1} of ${effectivePages.length}`)
		expect(page).toContain('Controlled copy CC-0142-07')
	})
	draftPages.forEach((page, index) => {
		expect(page).toContain(`Page ${index + 1} of ${draftPages.length}`)
		expect(page).toContain('Uncontrolled copy')
	})
})

test('[DOS-006] a version that is not effective carries DRAFT on every page; an effective one carries no mark — PRODUCT.md §6', async () => {
	for (const page of draftPages) expect(page).toMatch(/\bDRAFT\b/)
	for (const page of effectivePages) expect(page).not.toMatch(/DRAFT|SUPERSEDED|RETIRED/)
	for (const state of ['in_review', 'approved'] as const) {
		const pages = await pdfPageTexts(
			(await renderDossier({ ...sampleData(), version: { ...sample.version, state } }, { format: 'pdf', template }))
				.bytes,
		)
		for (const page of pages) expect(page).toMatch(/\bDRAFT\b/)
	}
	// Our choice: a superseded version is not shown as a draft; it says what it is.
	const superseded = await pdfPageTexts(
		(
			await renderDossier(
				{ ...sampleData(), version: { ...sample.version, state: 'superseded' } },
				{ format: 'pdf', template },
			)
		).bytes,
	)
	for (const page of superseded) expect(page).toMatch(/\bSUPERSEDED\b/)
})

test('[DOS-007] the product caution is in the document — PRODUCT.md §8', () => {
	const text = squash(effectivePages.join(' '))
	expect(text).toContain(
		squash("A conforming spectral comparison supports, but does not replace, the laboratory's approved procedures."),
	)
	expect(text).toContain(squash('Release decisions rest with the responsible QA person under local regulations.'))
})

test('[DOS-008] Inter and Merriweather are embedded as TrueType font files, subset-tagged, none missing', async () => {
	const doc = await PDFDocument.load(effective.bytes, { updateMetadata: false })
	const baseFonts: Array<string> = []
	let descriptors = 0
	for (const [, object] of doc.context.enumerateIndirectObjects()) {
		if (!(object instanceof PDFDict)) continue
		const type = object.get(PDFName.of('Type'))
		if (type === PDFName.of('FontDescriptor')) {
			descriptors++
			expect(object.get(PDFName.of('FontFile2')), 'every font has its TrueType program embedded').toBeDefined()
		}
		if (type === PDFName.of('Font') && object.get(PDFName.of('Subtype')) === PDFName.of('Type0')) {
			baseFonts.push(String(object.get(PDFName.of('BaseFont'))).replace(/^\//, ''))
		}
	}
	expect(descriptors).toBe(baseFonts.length)
	const names = baseFonts.map((name) => name.replace(/^[A-Z]{6}\+/, '')).sort()
	expect(names).toEqual([
		'Inter-Italic',
		'Inter-Regular',
		'Inter-SemiBold',
		'Merriweather-Bold',
		'Merriweather-Regular',
	])
	for (const name of baseFonts) expect(name).toMatch(/^[A-Z]{6}\+/)
})

test('[DOS-009] figures are vectors: the PDF holds no raster images, and the wavenumber axis runs from high to low', async () => {
	const doc = await PDFDocument.load(effective.bytes, { updateMetadata: false })
	for (const [, object] of doc.context.enumerateIndirectObjects()) {
		const dict = object instanceof PDFRawStream ? object.dict : object instanceof PDFDict ? object : null
		expect(dict?.get(PDFName.of('Subtype'))).not.toBe(PDFName.of('Image'))
	}
	const pageNumber = effectivePages.findIndex((page) => page.includes('Figure 3.1')) + 1
	expect(pageNumber).toBeGreaterThan(0)
	expect(effectivePages[pageNumber - 1]).toContain('Wavenumber (cm⁻¹)')
	const items = await pdfPageItems(effective.bytes, pageNumber)
	const tick = (label: string) => items.find((item) => item.str === label)
	const high = tick('4000')
	const low = tick('1000')
	expect(high).toBeDefined()
	expect(low).toBeDefined()
	expect(Math.abs(high!.y - low!.y)).toBeLessThan(0.5)
	expect(high!.x).toBeLessThan(low!.x)
	// Band markers carry the band positions.
	for (const band of sample.referenceSpectrum!.bands) expect(tick(band.label)).toBeDefined()
})

test('[DOS-010] same data and renderedAt give the same bytes; another renderedAt gives other bytes and dates', async () => {
	const again = await renderDossier(sampleData(), { format: 'pdf', template })
	expect(again.sha256).toBe(effective.sha256)
	expect(Buffer.from(again.bytes).equals(Buffer.from(effective.bytes))).toBe(true)
	expect(effective.sha256).toBe(createHash('sha256').update(effective.bytes).digest('hex'))
	const later = await renderDossier(
		{ ...sampleData(), renderedAt: '2025-04-02T08:00:00Z' },
		{ format: 'pdf', template },
	)
	expect(later.sha256).not.toBe(effective.sha256)
	const doc = await PDFDocument.load(later.bytes, { updateMetadata: false })
	expect(doc.getCreationDate()?.toISOString()).toBe('2025-04-02T08:00:00.000Z')
	expect(doc.getModificationDate()?.toISOString()).toBe('2025-04-02T08:00:00.000Z')
	expect(doc.getTitle()).toContain('CVP-QC-IR-0142')
})

test('[DOS-011] a copy changed by one byte no longer identifies as the dossier', () => {
	const record = {
		sha256: effective.sha256,
		documentNumber: 'CVP-QC-IR-0142',
		versionNumber: 3,
		templateId: template.id,
		templateVersion: template.version,
		templateSha256: template.sha256,
		format: 'pdf' as const,
	}
	expect(identifyDossier([record], effective.sha256).status).toBe('match')
	const changed = new Uint8Array(effective.bytes)
	const middle = Math.floor(changed.length / 2)
	changed[middle] = changed[middle]! ^ 0x01
	expect(identifyDossier([record], createHash('sha256').update(changed).digest('hex')).status).toBe('no-match')
})

test('[DOS-012] a 100-row band table breaks across pages with its head row repeated on each', async () => {
	const pages = await pdfPageTexts(
		(await renderDossier(withBands(sampleData(), 100), { format: 'pdf', template })).bytes,
	)
	const withRows = pages.filter((page) => page.includes('synthetic row for paging'))
	expect(withRows.length).toBeGreaterThanOrEqual(2)
	for (const page of withRows) {
		expect(page).toContain('Position (cm⁻¹)')
		expect(page).toContain('Tolerance (± cm⁻¹)')
		expect(page).toContain('Assignment')
	}
	const text = pages.join(' ')
	for (const n of [1, 50, 100]) expect(text).toContain(`Band ${n}: synthetic row for paging`)
	pages.forEach((page, index) => expect(page).toContain(`Page ${index + 1} of ${pages.length}`))
})

test('[DOS-013] twenty evidence records all render, each with its verdict and overlay caption', async () => {
	const pages = await pdfPageTexts(
		(await renderDossier(withEvidence(sampleData(), 20), { format: 'pdf', template })).bytes,
	)
	const text = pages.join(' ')
	for (let n = 1; n <= 20; n++) expect(text).toContain(`Record ${n}`)
	expect(text).toContain('Figure 7.20')
	pages.forEach((page, index) => expect(page).toContain(`Page ${index + 1} of ${pages.length}`))
})

test.skipIf(!hasPoppler())('[DOS-014] pdftoppm renders every page (PNGs in screenshots/dossier/pdf for review)', () => {
	const dir = path.resolve(process.cwd(), 'screenshots', 'dossier', 'pdf')
	rmSync(dir, { recursive: true, force: true })
	mkdirSync(dir, { recursive: true })
	for (const [name, rendered, pages] of [
		['effective', effective, effectivePages],
		['draft', draft, draftPages],
	] as const) {
		const file = path.join(dir, `${name}.pdf`)
		writeFileSync(file, rendered.bytes)
		execFileSync('pdftoppm', ['-png', '-r', '60', file, path.join(dir, name)], { stdio: ['ignore', 'ignore', 'pipe'] })
		const pngs = readdirSync(dir).filter((entry) => entry.startsWith(`${name}-`) && entry.endsWith('.png'))
		expect(pngs).toHaveLength(pages.length)
		// A page with only a header and footer compresses to a few kilobytes; ours all hold content.
		for (const png of pngs) expect(statSync(path.join(dir, png)).size).toBeGreaterThan(8_000)
	}
})

test('[DOS-015] a first draft with almost nothing filled in renders in both formats, and markup characters in data print as typed', async () => {
	const data = sampleData()
	const bare = {
		...data,
		version: { number: 1, state: 'draft' as const, effectiveFrom: null, changeReason: null },
		controlledCopy: { number: null, issuedTo: null, notice: 'uncontrolled' as const },
		signatures: [],
		body: { ...data.body, scope: '', notes: '', method: { ...data.body.method, samplePreparation: '' } },
		referenceSpectrum: null,
		bands: [
			{
				position: 1734,
				tolerance: 4,
				assignment: 'C=O & C–O <ester> "quoted" {{not a field}}',
				intensityClass: 'vs' as const,
				shape: 'sharp' as const,
				required: true,
			},
		],
		evidence: [],
		revisionHistory: [],
		auditExtract: [],
	}
	const pages = await pdfPageTexts((await renderDossier(bare, { format: 'pdf', template })).bytes)
	const text = pages.join(' ')
	expect(text).toContain('No signatures yet')
	expect(text).toContain('No reference spectrum is linked to this version')
	expect(text).toContain('C=O & C–O <ester> "quoted" {{not a field}}')
	for (const page of pages) expect(page).toMatch(/\bDRAFT\b/)
	const docx = await renderDossier(bare, { format: 'docx', template })
	expect(docx.bytes.length).toBeGreaterThan(1000)
})
