/**
 * Identity-run record rendering: the same pipeline as the dossier (controlled template → block markup → one layout →
 * PDF or DOCX renderer), over the run's own data and template (`templates/run-record/`).
 */
import {
	type RunRecordDocument,
	RunRecordDocumentSchema,
	type RunRecordDocumentInput,
} from '#shared/runs/record-document.ts'
import { drawDocument, type DocumentFormat, type RenderedDocument } from '#app/.server/render/document.ts'
import { FIGURE_COLORS, spectrumFigure } from '#app/.server/render/figure.ts'
import { buildLayout, type DocumentLayout, FIGURE_WIDTH, type FigureResolver } from '#app/.server/render/layout.ts'
import type { DocumentTemplate, TemplateInfo } from '#app/.server/render/template.ts'

/** Lower than the dossier's figures: one per container, so that a container's bands and overlay share a page. */
const CONTAINER_FIGURE_HEIGHT = 150

/** `source="container" index="i"`: container i's sample over the reference, with the band-table positions marked. */
function runRecordFigures(data: RunRecordDocument): FigureResolver {
	return (source, attr) => {
		if (source !== 'container') throw new Error(`Template markup: figure source "${source}" is not container`)
		const index = Number(attr('index'))
		const container = data.containers[index]
		if (container?.overlay === null || container === undefined || data.reference === null)
			throw new Error(`Template markup: container ${index} has no overlay`)
		return spectrumFigure({
			width: FIGURE_WIDTH,
			height: CONTAINER_FIGURE_HEIGHT,
			xLabel: attr('x-label'),
			yLabel: attr('y-label'),
			regions: data.exclusionRegions,
			series: [
				{ points: data.reference.points, color: FIGURE_COLORS.reference, width: 0.8, label: attr('reference-label') },
				{ points: container.overlay, color: FIGURE_COLORS.sample, width: 0.8, label: attr('sample-label') },
			],
			markers: container.bands.map((band) => ({ position: band.position, label: String(Math.round(band.position)) })),
		})
	}
}

/** Validates the data and lays the record out. */
export function layoutRunRecord(input: RunRecordDocumentInput, template: DocumentTemplate): DocumentLayout {
	const data = RunRecordDocumentSchema.parse(input)
	const info: TemplateInfo = { id: template.id, version: template.version, sha256: template.sha256 }
	return buildLayout(template.expand({ ...data, template: info }), {
		root: 'run-record',
		figures: runRecordFigures(data),
	})
}

/** Renders a run record. Same data (including `renderedAt`) and template → same bytes. */
export async function renderRunRecord(
	input: RunRecordDocumentInput,
	options: { format: DocumentFormat; template: DocumentTemplate },
): Promise<RenderedDocument> {
	const layout = layoutRunRecord(input, options.template)
	const renderedAt = new Date(RunRecordDocumentSchema.shape.renderedAt.parse(input.renderedAt))
	return drawDocument(layout, { format: options.format, template: options.template, renderedAt })
}
