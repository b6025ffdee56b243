/**
 * The dossier renderer in its own thread: laying out and drawing a dossier takes from a few hundred milliseconds
 * to over a second, and on the server's main thread that would hold up every other user's requests.
 */
import { parentPort } from 'node:worker_threads'
import { type DossierFormat, renderDossier } from '#app/.server/render/dossier.ts'
import { loadTemplate, templateDir } from '#app/.server/render/template.ts'
import type { DossierDataInput } from '#shared/dossier/model.ts'

type Job = { id: number; data: DossierDataInput; format: DossierFormat; templateId: string }

const templates = new Map<string, ReturnType<typeof loadTemplate>>()

parentPort?.on('message', (job: Job) => {
	void (async () => {
		try {
			if (!templates.has(job.templateId)) templates.set(job.templateId, loadTemplate(templateDir(job.templateId)))
			const template = await templates.get(job.templateId)!
			const rendered = await renderDossier(job.data, { format: job.format, template })
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
