import { db } from '#app/.server/db/client.ts'
import { ensureMailWorker } from '#app/.server/mail/worker-start.ts'
import { applyDueEffectiveDates } from '#app/.server/services/spec-workflow.ts'

/** How often the server applies effective dates that have come (pages also apply them when they load). */
export const EFFECTIVE_DATE_INTERVAL_MS = 60_000

const KEY = Symbol.for('bandproof.background')
type Holder = { [KEY]?: NodeJS.Timeout }

/** Starts this server process's background work once: the mail outbox worker and the effective-date clock. */
export function ensureBackgroundWork(): void {
	if (process.env.NODE_ENV === 'test') return
	ensureMailWorker()
	const holder = globalThis as Holder
	holder[KEY] ??= setInterval(() => {
		applyDueEffectiveDates(db, new Date()).catch((error: unknown) => console.error('effective dates:', error))
	}, EFFECTIVE_DATE_INTERVAL_MS).unref()
}
