import { type MailWorker, startMailWorker } from '#app/.server/mail/outbox.ts'

/** How often the server process looks for due mail. */
export const MAIL_WORKER_INTERVAL_MS = 5_000

// NOTE: kept on globalThis rather than in a module variable alone, because the dev server re-evaluates server
// modules on change; a second worker would only compete for rows (SKIP LOCKED keeps that safe), but wastefully.
const KEY = Symbol.for('bandproof.mail-worker')
type WorkerHolder = { [KEY]?: MailWorker }

/**
 * Starts the outbox worker of this server process once; later calls return the same worker. Called from
 * app/entry.server.tsx. Reads SMTP_URL and MAIL_FROM when first called.
 */
export function ensureMailWorker(): MailWorker {
	const holder = globalThis as WorkerHolder
	holder[KEY] ??= startMailWorker({ intervalMs: MAIL_WORKER_INTERVAL_MS })
	return holder[KEY]
}

/** Stops the worker started by ensureMailWorker, if any (tests and orderly shutdowns). */
export async function stopMailWorker(): Promise<void> {
	const holder = globalThis as WorkerHolder
	const worker = holder[KEY]
	if (!worker) return
	delete holder[KEY]
	await worker.stop()
}
