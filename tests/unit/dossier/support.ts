/**
 * Shared fixtures for the dossier tests: the invented sample scenario (templates/dossier/sample-data.json), variants
 * of it, and readers that look at rendered files the way a person or another program would — text extracted by
 * pdfjs-dist, the XML inside the DOCX package.
 */
import { readFileSync } from 'node:fs'
import path from 'node:path'
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs'
import type { DossierDataInput } from '#shared/dossier/model.ts'
import { readZip } from '#app/.server/render/zip.ts'
export { pdfPageTexts } from '#tests/support/pdf-text.ts'

export const SAMPLE_PATH = path.resolve(process.cwd(), 'templates', 'dossier', 'sample-data.json')

/** A fresh copy of the sample data (effective version 3, controlled copy CC-0142-07). */
export function sampleData(): DossierDataInput {
	return JSON.parse(readFileSync(SAMPLE_PATH, 'utf8')) as DossierDataInput
}

/** The sample as a draft: not effective, uncontrolled, printed for an inspector. */
export function draftData(): DossierDataInput {
	const data = sampleData()
	return {
		...data,
		version: { ...data.version, state: 'draft', effectiveFrom: null },
		controlledCopy: {
			number: null,
			issuedTo: null,
			notice: 'uncontrolled',
			inspectionLine: 'Issued to R. Okafor (inspector) on 2025-06-02 for inspection',
		},
	}
}

/** The sample with `count` band rows (positions spread over 700–3600 cm⁻¹) and matching figure markers. */
export function withBands(data: DossierDataInput, count: number): DossierDataInput {
	const bands = Array.from({ length: count }, (_, i) => ({
		position: Math.round((3600 - (i * 2900) / Math.max(1, count - 1)) * 10) / 10,
		tolerance: 5,
		assignment: `Band ${i + 1}: synthetic row for paging`,
		intensityClass: 'm' as const,
		shape: 'sharp' as const,
		required: i % 2 === 0,
	}))
	return {
		...data,
		bands,
		referenceSpectrum: data.referenceSpectrum && {
			...data.referenceSpectrum,
			bands: bands.map((band) => ({ position: band.position, label: String(band.position) })),
		},
	}
}

/** The sample with `count` evidence records, cycling through the sample's own three. */
export function withEvidence(data: DossierDataInput, count: number): DossierDataInput {
	const evidence = Array.from({ length: count }, (_, i) => ({
		...data.evidence[i % data.evidence.length]!,
		title: `Record ${i + 1}`,
	}))
	return { ...data, evidence }
}

/** Positioned text items of one PDF page: string and baseline origin (x, y) in points. */
export async function pdfPageItems(
	bytes: Uint8Array,
	pageNumber: number,
): Promise<Array<{ str: string; x: number; y: number }>> {
	const pdf = await getDocument({
		data: new Uint8Array(bytes),
		verbosity: 0,
		isEvalSupported: false,
		disableFontFace: true,
	}).promise
	const content = await (await pdf.getPage(pageNumber)).getTextContent()
	const items = content.items.flatMap((item) =>
		'str' in item ? [{ str: item.str, x: Number(item.transform[4]), y: Number(item.transform[5]) }] : [],
	)
	await pdf.destroy()
	return items
}

/** Whitespace removed: for checks that must not depend on where lines wrap. */
export function squash(text: string): string {
	return text.replace(/\s+/g, '')
}

/** The XML parts of a DOCX package by name. */
export function docxParts(bytes: Uint8Array): Map<string, string> {
	const decoder = new TextDecoder()
	return new Map(
		readZip(bytes).map((entry) => [entry.name, /\.(xml|rels)$/.test(entry.name) ? decoder.decode(entry.data) : '']),
	)
}

/** Visible text of a WordprocessingML part: its w:t text, tabs and breaks, paragraphs separated by newlines. */
export function wordText(xml: string): string {
	return xml
		.split(/<\/w:p>/)
		.map((paragraph) =>
			[...paragraph.matchAll(/<w:t(?:\s[^>]*)?>([^<]*)<\/w:t>|<w:(tab|br)\/>/g)]
				.map((match) => (match[2] === 'tab' ? '\t' : match[2] === 'br' ? '\n' : match[1]!))
				.join('')
				.replace(/&lt;/g, '<')
				.replace(/&gt;/g, '>')
				.replace(/&quot;/g, '"')
				.replace(/&apos;/g, "'")
				.replace(/&amp;/g, '&'),
		)
		.join('\n')
}
