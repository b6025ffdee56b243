/**
 * Dossier rendering entry point: validate the data, expand the controlled template into block markup, lay it out,
 * and draw it as PDF or DOCX. The template holds every fixed word; the data holds every fact; nothing reads a clock.
 */
import { type DossierData, DossierDataSchema, type DossierDataInput } from '#shared/dossier/model.ts'
import { drawDocument, type DocumentFormat, type RenderedDocument } from '#app/.server/render/document.ts'
import { FIGURE_COLORS, spectrumFigure } from '#app/.server/render/figure.ts'
import {
	buildLayout,
	type DocumentLayout,
	FIGURE_HEIGHT,
	FIGURE_WIDTH,
	type FigureResolver,
} from '#app/.server/render/layout.ts'
import type { DocumentTemplate, TemplateInfo } from '#app/.server/render/template.ts'

/**
 * The dossier's figures: `source="reference"` (the reference spectrum with its band markers) and
 * `source="evidence" index="i"` (evidence record i's sample over the reference).
 */
function dossierFigures(data: DossierData): FigureResolver {
	return (source, attr) => {
		const regions = data.body.criteria.exclusionRegions.map((region) => ({
			from: region.from,
			to: region.to,
			label: region.label,
		}))
		const base = {
			width: FIGURE_WIDTH,
			height: FIGURE_HEIGHT,
			xLabel: attr('x-label'),
			yLabel: attr('y-label'),
			regions,
		}
		if (source === 'reference') {
			const spectrum = data.referenceSpectrum
			if (spectrum === null) throw new Error('Template markup: a reference figure without a reference spectrum')
			return spectrumFigure({
				...base,
				series: [{ points: spectrum.points, color: FIGURE_COLORS.reference, width: 0.8, label: null }],
				markers: spectrum.bands,
			})
		}
		if (source !== 'evidence')
			throw new Error(`Template markup: figure source "${source}" is not one of reference, evidence`)
		const index = Number(attr('index'))
		const overlay = data.evidence[index]?.overlay
		if (overlay === null || overlay === undefined) throw new Error(`Template markup: evidence ${index} has no overlay`)
		return spectrumFigure({
			...base,
			series: [
				{ points: overlay.reference, color: FIGURE_COLORS.reference, width: 0.8, label: attr('reference-label') },
				{ points: overlay.sample, color: FIGURE_COLORS.sample, width: 0.8, label: attr('sample-label') },
			],
			markers: [],
		})
	}
}

/** Validates the data and lays the dossier out (shared by both formats; exported for previews and tests). */
export function layoutDossier(input: DossierDataInput, template: DocumentTemplate): DocumentLayout {
	const data = DossierDataSchema.parse(input)
	const info: TemplateInfo = { id: template.id, version: template.version, sha256: template.sha256 }
	return buildLayout(template.expand({ ...data, template: info }), { root: 'dossier', figures: dossierFigures(data) })
}

/** Renders a dossier. Same data (including `renderedAt`) and template → same bytes. */
export async function renderDossier(
	input: DossierDataInput,
	options: { format: DocumentFormat; template: DocumentTemplate },
): Promise<RenderedDocument> {
	const layout = layoutDossier(input, options.template)
	const renderedAt = new Date(DossierDataSchema.shape.renderedAt.parse(input.renderedAt))
	return drawDocument(layout, { format: options.format, template: options.template, renderedAt })
}
