/**
 * What every controlled document (the specification dossier, the identity-run record) has in common once it is laid
 * out: drawn as PDF or DOCX by the same two renderers, hashed, and labelled with the template that made it.
 */
import { createHash } from 'node:crypto'
import { renderDocx } from '#app/.server/render/docx.ts'
import type { DocumentLayout } from '#app/.server/render/layout.ts'
import { renderPdf } from '#app/.server/render/pdf.ts'
import type { DocumentTemplate, TemplateInfo } from '#app/.server/render/template.ts'

export type DocumentFormat = 'pdf' | 'docx'

export type RenderedDocument = {
	bytes: Uint8Array
	/** SHA-256 of `bytes`, 64 lowercase hex digits. */
	sha256: string
	format: DocumentFormat
	/** Which template made it: stored or audited with the document. */
	template: TemplateInfo
}

/** Draws a laid-out document. Same layout, `renderedAt` and template → same bytes. */
export async function drawDocument(
	layout: DocumentLayout,
	options: { format: DocumentFormat; template: DocumentTemplate; renderedAt: Date },
): Promise<RenderedDocument> {
	const { format, template, renderedAt } = options
	const bytes = format === 'pdf' ? await renderPdf(layout, { renderedAt }) : await renderDocx(layout, { renderedAt })
	return {
		bytes,
		sha256: createHash('sha256').update(bytes).digest('hex'),
		format,
		template: { id: template.id, version: template.version, sha256: template.sha256 },
	}
}
