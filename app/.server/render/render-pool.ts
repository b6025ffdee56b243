import path from 'node:path'
import { Worker } from 'node:worker_threads'
import type { DocumentFormat, RenderedDocument } from '#app/.server/render/document.ts'
import type { DossierDataInput } from '#shared/dossier/model.ts'
import type { RunRecordDocumentInput } from '#shared/runs/record-document.ts'

/** One document to draw: which kind, its data (validated in the worker) and its controlled template. */
export type RenderJob = { format: DocumentFormat; templateId: string } & (
	{ document: 'dossier'; data: DossierDataInput } | { document: 'run-record'; data: RunRecordDocumentInput }
)

type Pending = { resolve: (value: RenderedDocument) => void; reject: (error: Error) => void }

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
		(message: { id: number; ok: true; rendered: RenderedDocument } | { id: number; ok: false; message: string }) => {
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
		if (code !== 0) failAll(new Error(`the document renderer stopped (exit ${code})`))
		worker = null
	})
	started.unref()
	worker = started
	return started
}

/** Renders a document off the main thread; other requests are served meanwhile. */
export function renderOffThread(job: RenderJob): Promise<RenderedDocument> {
	return new Promise((resolve, reject) => {
		const id = nextId++
		pending.set(id, { resolve, reject })
		renderer().postMessage({ ...job, id })
	})
}
