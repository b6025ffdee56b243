/**
 * The DOCX dossier, read back from its package: the WordprocessingML parts' text and markup, the ZIP structure
 * (checked with Info-ZIP's `unzip -t` when installed, as an independent reader), and LibreOffice's conversion when
 * LibreOffice is installed.
 */
import { execFileSync } from 'node:child_process'
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { expect, test } from 'vitest'
import { DossierDataSchema } from '#shared/dossier/model.ts'
import { renderDossier } from '#app/.server/render/dossier.ts'
import { loadTemplate, templateDir } from '#app/.server/render/template.ts'
import { readZip } from '#app/.server/render/zip.ts'
import { docxParts, draftData, sampleData, squash, withBands, wordText } from '#tests/unit/dossier/support.ts'

const template = await loadTemplate(templateDir('dossier'))
const sample = DossierDataSchema.parse(sampleData())
const effective = await renderDossier(sampleData(), { format: 'docx', template })
const draft = await renderDossier(draftData(), { format: 'docx', template })
const parts = docxParts(effective.bytes)
const draftParts = docxParts(draft.bytes)
const body = wordText(parts.get('word/document.xml')!)

function available(command: string, args: Array<string>): boolean {
	try {
		execFileSync(command, args, { stdio: 'ignore', timeout: 20_000 })
		return true
	} catch {
		return false
	}
}
const libreOffice = ['soffice', 'libreoffice'].find((command) => available(command, ['--version']))

test('[DOS-101] the signature manifest shows each printed name, meaning, and date and time with zone — 21 CFR 11.50(a)(1)–(3), FACTS.md §3.1 [READ-2°]', () => {
	for (const [signature, meaning] of sample.signatures.map(
		(s, i) => [s, ['Authored', 'Reviewed', 'Approved'][i]!] as const,
	)) {
		expect(body).toContain(signature.printedName)
		expect(body).toContain(meaning)
		expect(body).toContain(signature.localTime)
		expect(body).toContain(`(${signature.signerTimeZone})`)
		expect(body).toContain(`${signature.signedAtUtc.slice(0, 10)} ${signature.signedAtUtc.slice(11, 19)} UTC`)
	}
})

test('[DOS-102] band-table values, the content hash, the template and the product caution are in the document — PRODUCT.md §6, §8', () => {
	for (const band of sample.bands) {
		expect(body).toContain(band.position.toFixed(1))
		expect(body).toContain(band.tolerance.toFixed(1))
		expect(body).toContain(band.assignment)
	}
	expect(body).toContain(sample.contentSha256)
	expect(body).toContain(template.sha256)
	expect(squash(body)).toContain(squash("supports, but does not replace, the laboratory's approved procedures"))
	expect(squash(body)).toContain(
		squash('Release decisions rest with the responsible QA person under local regulations'),
	)
})

test('[DOS-103] one header and one footer serve every page: number, version, controlled-copy notice, PAGE of NUMPAGES — PRODUCT.md §6', () => {
	const document = parts.get('word/document.xml')!
	expect(document.match(/<w:sectPr\b/g)).toHaveLength(1)
	expect(document).toMatch(/<w:headerReference w:type="default"/)
	expect(document).toMatch(/<w:footerReference w:type="default"/)
	expect(document).not.toContain('<w:titlePg') // no different first page
	const header = wordText(parts.get('word/header1.xml')!)
	expect(header).toContain('CVP-QC-IR-0142 · Version 3 · Effective')
	expect(header).toContain('Controlled copy CC-0142-07')
	const footer = parts.get('word/footer1.xml')!
	expect(wordText(footer)).toContain('Page')
	expect(wordText(footer)).toContain('of')
	expect(footer).toMatch(/<w:instrText[^>]*>PAGE<\/w:instrText>/)
	expect(footer).toMatch(/<w:instrText[^>]*>NUMPAGES<\/w:instrText>/)
	expect(wordText(draftParts.get('word/header1.xml')!)).toContain('Uncontrolled copy')
})

test('[DOS-104] a draft carries a DRAFT watermark and header mark; an effective version carries neither — PRODUCT.md §6', () => {
	const header = draftParts.get('word/header1.xml')!
	expect(header).toMatch(/<v:textpath[^>]*string="DRAFT"/)
	expect(wordText(header)).toMatch(/\bDRAFT\b/)
	for (const [name, xml] of parts) expect(xml, name).not.toMatch(/DRAFT/)
})

test('[DOS-105] figures are PNG images rendered from the figure SVG, with their captions as alt text', () => {
	const media = readZip(effective.bytes).filter((entry) => entry.name.startsWith('word/media/'))
	expect(media).toHaveLength(3) // the reference and two overlays (the instrument check has none)
	for (const image of media) {
		expect(Array.from(image.data.subarray(0, 8))).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])
		const view = new DataView(image.data.buffer, image.data.byteOffset)
		expect(view.getUint32(16)).toBeGreaterThanOrEqual(1400) // px wide: about 216 dpi over the text width
	}
	expect(parts.get('word/document.xml')).toContain('descr="Figure 3.1 Reference spectrum of Caldrenine hydrochloride')
})

test('[DOS-106] tables repeat their head row on each page and rows do not split; text is set in Inter and Merriweather', async () => {
	const document = parts.get('word/document.xml')!
	expect(document.match(/<w:tblHeader\/>/g)).toHaveLength(4) // manifest, band table, revision history, audit extract
	expect(document).toContain('<w:cantSplit/>')
	const styles = parts.get('word/styles.xml')!
	expect(styles).toContain('w:ascii="Inter"')
	expect(styles).toContain('w:ascii="Merriweather"')
	const many = docxParts((await renderDossier(withBands(sampleData(), 100), { format: 'docx', template })).bytes)
	expect(wordText(many.get('word/document.xml')!)).toContain('Band 100: synthetic row for paging')
})

test('[DOS-107] same data and renderedAt give the same bytes; dates come from renderedAt, never the clock', async () => {
	const again = await renderDossier(sampleData(), { format: 'docx', template })
	expect(again.sha256).toBe(effective.sha256)
	expect(Buffer.from(again.bytes).equals(Buffer.from(effective.bytes))).toBe(true)
	const core = parts.get('docProps/core.xml')!
	expect(core).toMatch(/<dcterms:created[^>]*>2025-04-01T07:30:00Z<\/dcterms:created>/)
	expect(core).toMatch(/<dcterms:modified[^>]*>2025-04-01T07:30:00Z<\/dcterms:modified>/)
	// Every ZIP entry carries the same MS-DOS time: 2025-04-01 07:30:00.
	const bytes = effective.bytes
	const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength)
	let stamps = 0
	for (let i = 0; i + 4 <= bytes.length; i++) {
		if (view.getUint32(i, true) !== 0x02014b50) continue
		expect(view.getUint16(i + 12, true)).toBe((7 << 11) | (30 << 5))
		expect(view.getUint16(i + 14, true)).toBe(((2025 - 1980) << 9) | (4 << 5) | 1)
		stamps++
	}
	expect(stamps).toBe(readZip(bytes).length)
	const later = await renderDossier(
		{ ...sampleData(), renderedAt: '2025-04-02T08:00:00Z' },
		{ format: 'docx', template },
	)
	expect(later.sha256).not.toBe(effective.sha256)
	expect(docxParts(later.bytes).get('docProps/core.xml')).toContain('2025-04-02T08:00:00Z')
})

test.skipIf(!available('unzip', ['-v']))(
	'[DOS-108] the package passes an independent ZIP integrity check (unzip -t)',
	() => {
		const dir = mkdtempSync(path.join(tmpdir(), 'bandproof-docx-'))
		try {
			const file = path.join(dir, 'dossier.docx')
			writeFileSync(file, draft.bytes)
			expect(execFileSync('unzip', ['-t', file], { encoding: 'utf8' })).toContain('No errors detected')
		} finally {
			rmSync(dir, { recursive: true, force: true })
		}
	},
)

test.skipIf(libreOffice === undefined)('[DOS-109] LibreOffice opens the DOCX and converts it to PDF', () => {
	const dir = mkdtempSync(path.join(tmpdir(), 'bandproof-lo-'))
	try {
		const file = path.join(dir, 'dossier.docx')
		writeFileSync(file, effective.bytes)
		execFileSync(libreOffice!, ['--headless', '--convert-to', 'pdf', '--outdir', dir, file], {
			stdio: 'ignore',
			timeout: 120_000,
		})
		expect(existsSync(path.join(dir, 'dossier.pdf'))).toBe(true)
	} finally {
		rmSync(dir, { recursive: true, force: true })
	}
})
