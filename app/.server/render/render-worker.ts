/**
 * The document renderer in its own thread: laying out and drawing a dossier or a run record takes from a few hundred
 * milliseconds to over a second, and on the server's main thread that would hold up every other user's requests.
 */
import { parentPort } from 'node:worker_threads'
import type { RenderJob } from '#app/.server/render/render-pool.ts'
import { renderDossier } from '#app/.server/render/dossier.ts'
import { renderRunRecord } from '#app/.server/render/run-record.ts'
import { loadTemplate, templateDir } from '#app/.server/render/template.ts'

const templates = new Map<string, ReturnType<typeof loadTemplate>>()

parentPort?.on('message', (job: RenderJob & { id: number }) => {
	void (async () => {
		try {
			if (!templates.has(job.templateId)) templates.set(job.templateId, loadTemplate(templateDir(job.templateId)))
			const template = await templates.get(job.templateId)!
			const rendered =
				job.document === 'dossier'
					? await renderDossier(job.data, { format: job.format, template })
					: await renderRunRecord(job.data, { format: job.format, template })
			parentPort?.postMessage({ id: job.id, ok: true, rendered }, [rendered.bytes.buffer as ArrayBuffer])
		} catch (error) {
			parentPort?.postMessage({
				id: job.id,
				ok: false,
				message: error instanceof Error ? error.message : String(error),
			})
		}
	})()
})
