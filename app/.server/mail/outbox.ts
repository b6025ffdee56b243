import { and, asc, desc, eq, isNull, lte, ne, or } from 'drizzle-orm'
import { z } from 'zod'
import { db as appDb, type Db } from '#app/.server/db/client.ts'
import { fakeMailbox, MAIL_KINDS, type MailKind, mailOutbox } from '#app/.server/db/schema/outbox.ts'
import { createMailTransport, isServerUnreachable, type MailTransport } from '#app/.server/mail/transport.ts'

export const EnqueueMailSchema = z.object({
	to: z.array(z.email()).max(200),
	subject: z.string().trim().min(1).max(500),
	text: z.string().min(1),
	html: z.string().min(1).nullish(),
	kind: z.enum(MAIL_KINDS),
	entityType: z.string().trim().min(1).max(100).optional(),
	entityId: z.string().trim().min(1).max(200).optional(),
	now: z.date(),
})
export type EnqueueMailInput = z.input<typeof EnqueueMailSchema>

/**
 * Queues one message. Call it with the transaction of the workflow step that causes the mail: the row commits or
 * rolls back with the step, and the worker sends it after the commit (never inside the step, which an SMTP outage
 * must not block). Addresses are deduplicated regardless of case; with no recipient left nothing is queued and
 * the result is null (e.g. nobody holds the role yet). Invalid input is a bug and throws.
 */
export async function enqueueMail(db: Db, input: EnqueueMailInput): Promise<{ id: string } | null> {
	const mail = EnqueueMailSchema.parse(input)
	const seen = new Set<string>()
	const to = mail.to.filter((address) => {
		const key = address.toLowerCase()
		if (seen.has(key)) return false
		seen.add(key)
		return true
	})
	if (to.length === 0) return null
	const [row] = await db
		.insert(mailOutbox)
		.values({
			kind: mail.kind,
			to,
			subject: mail.subject,
			text: mail.text,
			html: mail.html ?? null,
			entityType: mail.entityType ?? null,
			entityId: mail.entityId ?? null,
			createdAt: mail.now,
			nextAttemptAt: mail.now,
		})
		.returning({ id: mailOutbox.id })
	return { id: row!.id }
}

/** First retry after 30 s; each further failure doubles the wait. */
export const RETRY_BASE_MS = 30_000
/** The wait never grows beyond an hour, so mail goes out within the hour after a long outage ends. */
export const RETRY_CAP_MS = 60 * 60_000

/** Wait in ms before the next attempt, after `failedAttempts` failures (≥ 1): 30 s × 2^(n−1), at most 1 h. Pure. */
export function retryDelayMs(failedAttempts: number): number {
	const exponent = Math.max(0, failedAttempts - 1)
	// NOTE: 2^7 × 30 s already exceeds the cap; clamping the exponent keeps the arithmetic finite for any count.
	return Math.min(RETRY_CAP_MS, RETRY_BASE_MS * 2 ** Math.min(exponent, 20))
}

export type DeliveryReport = {
	sent: Array<{ id: string; messageId: string }>
	failed: Array<{ id: string; error: string; attempts: number; nextAttemptAt: Date }>
	/** The transport's reason for not sending at all (e.g. no SMTP_URL configured), else null. */
	unavailable: string | null
	/** Set when the database failed during the round; the rows concerned stay due. */
	databaseError: string | null
}

/** Rows delivered at most per round, so that one round stays short however long the queue. */
const ROUND_LIMIT = 50

function describeError(error: unknown): string {
	const message = error instanceof Error ? error.message : String(error)
	return message.slice(0, 2000) || 'unknown error'
}

function dueAt(now: Date) {
	return and(isNull(mailOutbox.sentAt), lte(mailOutbox.nextAttemptAt, now))
}

/**
 * Sends the mail that is due at `now`, oldest first, one row per transaction: each row is locked with
 * `FOR UPDATE SKIP LOCKED`, so two workers (two server processes) never send the same row, and its outcome
 * commits on its own. A sent row gets sentAt and messageId; a failed one gets lastError, one more attempt and
 * nextAttemptAt = now + retryDelayMs(attempts). Never throws: failures are recorded and returned.
 *
 * Without a configured transport the due rows only get its reason as lastError (no attempt is counted), so
 * they all go out on the first round after SMTP_URL is set. When the server is unreachable the round stops
 * after the first failure instead of waiting for each remaining row's connection to time out.
 */
export async function deliverDueMail(db: Db, transport: MailTransport, now: Date): Promise<DeliveryReport> {
	const report: DeliveryReport = { sent: [], failed: [], unavailable: transport.unavailable, databaseError: null }
	if (transport.unavailable) {
		const reason = transport.unavailable
		try {
			await db
				.update(mailOutbox)
				.set({ lastError: reason })
				.where(and(dueAt(now), or(isNull(mailOutbox.lastError), ne(mailOutbox.lastError, reason))))
		} catch (error) {
			report.databaseError = describeError(error)
		}
		return report
	}
	for (let count = 0; count < ROUND_LIMIT; count++) {
		let outcome: 'empty' | 'sent' | 'failed' | 'unreachable'
		try {
			outcome = await db.transaction(async (tx) => {
				const [row] = await tx
					.select()
					.from(mailOutbox)
					.where(dueAt(now))
					.orderBy(asc(mailOutbox.nextAttemptAt), asc(mailOutbox.createdAt))
					.limit(1)
					.for('update', { skipLocked: true })
				if (!row) return 'empty'
				let sent: { messageId: string } | null = null
				let failure: unknown = null
				try {
					sent = await transport.send({ to: row.to, subject: row.subject, text: row.text, html: row.html })
				} catch (error) {
					failure = error
				}
				if (sent) {
					const { messageId } = sent
					await tx.update(mailOutbox).set({ sentAt: now, messageId, lastError: null }).where(eq(mailOutbox.id, row.id))
					report.sent.push({ id: row.id, messageId })
					return 'sent'
				}
				const attempts = row.attempts + 1
				const nextAttemptAt = new Date(now.getTime() + retryDelayMs(attempts))
				const lastError = describeError(failure)
				await tx.update(mailOutbox).set({ attempts, nextAttemptAt, lastError }).where(eq(mailOutbox.id, row.id))
				report.failed.push({ id: row.id, error: lastError, attempts, nextAttemptAt })
				return isServerUnreachable(failure) ? 'unreachable' : 'failed'
			})
		} catch (error) {
			// NOTE: the database failed. A message already sent stays due and goes out again next round (at least once).
			report.databaseError = describeError(error)
			break
		}
		if (outcome === 'empty' || outcome === 'unreachable') break
	}
	return report
}

export type MailWorker = {
	/** Runs one round now (or waits for the one in progress) and returns its report. */
	runOnce(): Promise<DeliveryReport>
	/** Stops the timer, waits for a round in progress, and closes the transport it created. */
	stop(): Promise<void>
}

export type MailWorkerOptions = {
	/** Pause between the end of one round and the start of the next. */
	intervalMs: number
	db?: Db
	/** Defaults to createMailTransport() from SMTP_URL and MAIL_FROM. */
	transport?: MailTransport
	/** Called after every round; the default logs failures (and a missing SMTP_URL once). */
	onReport?: (report: DeliveryReport) => void
}

function logReport(): (report: DeliveryReport) => void {
	let toldUnavailable = false
	return (report) => {
		for (const failure of report.failed) {
			console.warn(
				`mail ${failure.id}: attempt ${failure.attempts} failed (${failure.error}); next try ${failure.nextAttemptAt.toISOString()}`,
			)
		}
		if (report.databaseError) console.warn(`mail worker: database error (${report.databaseError}); will try again`)
		if (report.unavailable && !toldUnavailable) console.warn(`mail worker: mail stays queued (${report.unavailable})`)
		toldUnavailable = report.unavailable !== null
	}
}

/**
 * Delivers the outbox in the background of the server process: a round at start, then one `intervalMs` after
 * each round ends (rounds never overlap). The timer does not keep the process alive. Reads the clock: it is the
 * shell around deliverDueMail.
 */
export function startMailWorker(options: MailWorkerOptions): MailWorker {
	const db = options.db ?? appDb
	const ownTransport = options.transport ? null : createMailTransport()
	const transport = options.transport ?? ownTransport!
	const onReport = options.onReport ?? logReport()
	let timer: NodeJS.Timeout | null = null
	let running: Promise<DeliveryReport> | null = null
	let stopped = false

	function runOnce(): Promise<DeliveryReport> {
		running ??= deliverDueMail(db, transport, new Date())
			.catch((error: unknown): DeliveryReport => ({
				sent: [],
				failed: [],
				unavailable: null,
				databaseError: describeError(error),
			}))
			.then((report) => {
				try {
					onReport(report)
				} catch {
					// NOTE: a failing report callback must not stop deliveries.
				}
				return report
			})
			.finally(() => {
				running = null
			})
		return running
	}

	function schedule(): void {
		if (stopped) return
		timer = setTimeout(() => {
			timer = null
			void runOnce().finally(schedule)
		}, options.intervalMs)
		timer.unref()
	}

	void runOnce().finally(schedule)

	return {
		runOnce,
		async stop() {
			stopped = true
			if (timer) clearTimeout(timer)
			timer = null
			if (running) await running
			ownTransport?.close()
		},
	}
}

export type OutboxStatus = 'queued' | 'retrying' | 'sent'

export type OutboxEntry = {
	id: string
	kind: MailKind
	to: Array<string>
	subject: string
	createdAt: Date
	status: OutboxStatus
	attempts: number
	nextAttemptAt: Date | null
	sentAt: Date | null
	lastError: string | null
}

/** Queued (never tried, or waiting for a transport), retrying (an attempt failed) or sent. Pure. */
export function outboxStatus(row: { sentAt: Date | null; attempts: number }): OutboxStatus {
	if (row.sentAt) return 'sent'
	return row.attempts > 0 ? 'retrying' : 'queued'
}

/** The newest outbox rows, for the mailbox page. */
export async function listOutbox(db: Db, options: { limit: number }): Promise<Array<OutboxEntry>> {
	const rows = await db
		.select({
			id: mailOutbox.id,
			kind: mailOutbox.kind,
			to: mailOutbox.to,
			subject: mailOutbox.subject,
			createdAt: mailOutbox.createdAt,
			attempts: mailOutbox.attempts,
			nextAttemptAt: mailOutbox.nextAttemptAt,
			sentAt: mailOutbox.sentAt,
			lastError: mailOutbox.lastError,
		})
		.from(mailOutbox)
		.orderBy(desc(mailOutbox.createdAt), desc(mailOutbox.id))
		.limit(options.limit)
	return rows.map((row) => ({
		...row,
		status: outboxStatus(row),
		nextAttemptAt: row.sentAt ? null : row.nextAttemptAt,
	}))
}

export type ReceivedMail = {
	id: string
	receivedAt: Date
	from: string | null
	to: Array<string>
	subject: string | null
	text: string | null
}

/** The newest messages the local fake SMTP server received, for the mailbox page. */
export async function listReceivedMail(db: Db, options: { limit: number }): Promise<Array<ReceivedMail>> {
	return db
		.select({
			id: fakeMailbox.id,
			receivedAt: fakeMailbox.receivedAt,
			from: fakeMailbox.envelopeFrom,
			to: fakeMailbox.envelopeTo,
			subject: fakeMailbox.subject,
			text: fakeMailbox.text,
		})
		.from(fakeMailbox)
		.orderBy(desc(fakeMailbox.receivedAt), desc(fakeMailbox.id))
		.limit(options.limit)
}
