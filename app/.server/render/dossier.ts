/**
 * Dossier rendering entry point: validate the data, expand the controlled template into block markup, lay it out,
 * and draw it as PDF or DOCX. The template holds every fixed word; the data holds every fact; nothing reads a clock.
 */
import { createHash } from 'node:crypto'
import { DossierDataSchema, type DossierDataInput } from '#shared/dossier/model.ts'
import { renderDocx } from '#app/.server/render/docx.ts'
import { buildLayout, type DocumentLayout } from '#app/.server/render/layout.ts'
import { renderPdf } from '#app/.server/render/pdf.ts'
import type { DocumentTemplate, TemplateInfo } from '#app/.server/render/template.ts'

export type DossierFormat = 'pdf' | 'docx'

export type RenderedDossier = {
	bytes: Uint8Array
	/** SHA-256 of `bytes`, 64 lowercase hex digits. */
	sha256: string
	format: DossierFormat
	/** Which template made it: stored with the dossier. */
	template: TemplateInfo
}

/** Validates the data and lays the dossier out (shared by both formats; exported for previews and tests). */
export function layoutDossier(input: DossierDataInput, template: DocumentTemplate): DocumentLayout {
	const data = DossierDataSchema.parse(input)
	const info: TemplateInfo = { id: template.id, version: template.version, sha256: template.sha256 }
	return buildLayout(template.expand({ ...data, template: info }), data)
}

/** Renders a dossier. Same data (including `renderedAt`) and template → same bytes. */
export async function renderDossier(
	input: DossierDataInput,
	options: { format: DossierFormat; template: DocumentTemplate },
): Promise<RenderedDossier> {
	const layout = layoutDossier(input, options.template)
	const renderedAt = new Date(DossierDataSchema.shape.renderedAt.parse(input.renderedAt))
	const bytes =
		options.format === 'pdf' ? await renderPdf(layout, { renderedAt }) : await renderDocx(layout, { renderedAt })
	return {
		bytes,
		sha256: createHash('sha256').update(bytes).digest('hex'),
		format: options.format,
		template: { id: options.template.id, version: options.template.version, sha256: options.template.sha256 },
	}
}
