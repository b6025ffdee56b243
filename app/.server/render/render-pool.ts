import path from 'node:path'
import { Worker } from 'node:worker_threads'
import type { DossierFormat, RenderedDossier } from '#app/.server/render/dossier.ts'
import type { DossierDataInput } from '#shared/dossier/model.ts'

type Pending = { resolve: (value: RenderedDossier) => void; reject: (error: Error) => void }

let worker: Worker | null = null
let nextId = 1
const pending = new Map<number, Pending>()

function renderer(): Worker {
	if (worker) return worker
	// NOTE: the worker runs the TypeScript sources through tsx (a dependency), from the project root, so the same
	// file serves the dev server, the production build and the tests.
	const started = new Worker(path.resolve(process.cwd(), 'app/.server/render/render-worker.mjs'))
	started.on(
		'message',
		(message: { id: number; ok: true; rendered: RenderedDossier } | { id: number; ok: false; message: string }) => {
			const job = pending.get(message.id)
			if (!job) return
			pending.delete(message.id)
			if (message.ok) job.resolve({ ...message.rendered, bytes: new Uint8Array(message.rendered.bytes) })
			else job.reject(new Error(message.message))
		},
	)
	const failAll = (error: Error) => {
		worker = null
		for (const job of pending.values()) job.reject(error)
		pending.clear()
	}
	started.on('error', failAll)
	started.on('exit', (code) => {
		if (code !== 0) failAll(new Error(`the dossier renderer stopped (exit ${code})`))
		worker = null
	})
	started.unref()
	worker = started
	return started
}

/** Renders a dossier off the main thread; other requests are served meanwhile. */
export function renderDossierOffThread(
	data: DossierDataInput,
	options: { format: DossierFormat; templateId: string },
): Promise<RenderedDossier> {
	return new Promise((resolve, reject) => {
		const id = nextId++
		pending.set(id, { resolve, reject })
		renderer().postMessage({ id, data, format: options.format, templateId: options.templateId })
	})
}
