/**
 * Dossier rendering benchmarks: the time to render the typical sample dossier (12 bands, 3 evidence records, 3
 * figures) as PDF and as DOCX, and how that time grows from 1 to 100 band-table rows and from 1 to 20 evidence
 * records (each with an overlay figure where the sample's has one). Medians of several renders after warm-up; the
 * first render in a fresh process (module loading, JIT) is reported separately.
 */
import { readFileSync } from 'node:fs'
import path from 'node:path'
import type { DossierDataInput } from '#shared/dossier/model.ts'
import type { DocumentFormat } from '#app/.server/render/document.ts'
import { renderDossier } from '#app/.server/render/dossier.ts'
import { type DocumentTemplate, loadTemplate, templateDir } from '#app/.server/render/template.ts'

type BenchMetric = { name: string; value: number; unit: string; ratio?: number; goal?: string }

function sampleData(): DossierDataInput {
	return JSON.parse(readFileSync(path.join(templateDir('dossier'), 'sample-data.json'), 'utf8')) as DossierDataInput
}

function withBands(data: DossierDataInput, count: number): DossierDataInput {
	const bands = Array.from({ length: count }, (_, i) => ({
		position: Math.round((3600 - (i * 2900) / Math.max(1, count - 1)) * 10) / 10,
		tolerance: 5,
		assignment: `Band ${i + 1}`,
		intensityClass: 'm' as const,
		shape: 'sharp' as const,
		required: i % 2 === 0,
	}))
	const markers = bands.map((band) => ({ position: band.position, label: String(band.position) }))
	return { ...data, bands, referenceSpectrum: data.referenceSpectrum && { ...data.referenceSpectrum, bands: markers } }
}

function withEvidence(data: DossierDataInput, count: number): DossierDataInput {
	return {
		...data,
		evidence: Array.from({ length: count }, (_, i) => ({
			...data.evidence[i % data.evidence.length]!,
			title: `Record ${i + 1}`,
		})),
	}
}

async function medianMs(
	data: DossierDataInput,
	format: DocumentFormat,
	template: DocumentTemplate,
	runs: number,
): Promise<number> {
	await renderDossier(data, { format, template })
	const times: Array<number> = []
	for (let i = 0; i < runs; i++) {
		const start = performance.now()
		await renderDossier(data, { format, template })
		times.push(performance.now() - start)
	}
	times.sort((a, b) => a - b)
	return times[Math.floor(times.length / 2)]!
}

function round(value: number): number {
	return Math.round(value * 10) / 10
}

export async function benchDossier(): Promise<Array<BenchMetric>> {
	const template = await loadTemplate(templateDir('dossier'))
	const typical = sampleData()
	const metrics: Array<BenchMetric> = []
	for (const format of ['pdf', 'docx'] as const) {
		const start = performance.now()
		await renderDossier(typical, { format, template })
		const first = performance.now() - start
		metrics.push({ name: `dossier ${format}: first render in this process`, value: round(first), unit: 'ms' })
		metrics.push({
			name: `dossier ${format}: typical (12 bands, 3 evidence, 3 figures)`,
			value: round(await medianMs(typical, format, template, 9)),
			unit: 'ms',
			goal: '< 1000 ms',
		})
		const oneBand = await medianMs(withBands(typical, 1), format, template, 5)
		const hundredBands = await medianMs(withBands(typical, 100), format, template, 5)
		metrics.push({
			name: `dossier ${format}: 100 band rows (ratio to 1 row)`,
			value: round(hundredBands),
			unit: 'ms',
			ratio: round(hundredBands / oneBand),
		})
		const oneRecord = await medianMs(withEvidence(typical, 1), format, template, 5)
		const twentyRecords = await medianMs(withEvidence(typical, 20), format, template, 3)
		metrics.push({
			name: `dossier ${format}: 20 evidence records (ratio to 1 record)`,
			value: round(twentyRecords),
			unit: 'ms',
			ratio: round(twentyRecords / oneRecord),
		})
	}
	return metrics
}
