import { createServer } from 'node:net'
import type { AddressInfo } from 'node:net'
import { eq } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { fakeMailbox, mailOutbox } from '#app/.server/db/schema/outbox.ts'
import {
	deliverDueMail,
	enqueueMail,
	type EnqueueMailInput,
	listOutbox,
	listReceivedMail,
	retryDelayMs,
	startMailWorker,
} from '#app/.server/mail/outbox.ts'
import { renderMail } from '#app/.server/mail/templates.ts'
import {
	createMailTransport,
	DEFAULT_MAIL_FROM,
	mailSettings,
	type MailTransport,
	NO_SMTP_URL,
} from '#app/.server/mail/transport.ts'
import { startFakeSmtp } from '#scripts/fake-smtp.ts'

const t0 = new Date('2026-03-02T09:00:00Z')
const seconds = (count: number) => new Date(t0.getTime() + count * 1000)

function approvalMail(overrides: Partial<EnqueueMailInput> = {}): EnqueueMailInput {
	return {
		to: ['approver@lab.test'],
		kind: 'ready-to-sign',
		entityType: 'spec-version',
		entityId: 'version-1',
		now: t0,
		...renderMail('ready-to-sign', {
			documentNumber: 'SPEC-0001',
			title: 'Lactose monohydrate',
			versionNumber: 2,
			actorName: 'Rita Reviewer',
			link: 'http://localhost:3000/specifications/s/versions/v',
		}),
		...overrides,
	}
}

/** A port nobody listens on (for a moment): the "mail server is down" case. */
async function freePort(): Promise<number> {
	const server = createServer()
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve))
	const { port } = server.address() as AddressInfo
	await new Promise<void>((resolve) => server.close(() => resolve()))
	return port
}

function failingTransport(message: string): MailTransport {
	return { unavailable: null, send: () => Promise.reject(new Error(message)), close: () => {} }
}

async function outboxRow(id: string) {
	const [row] = await db.select().from(mailOutbox).where(eq(mailOutbox.id, id))
	return row
}

test('[MAIL-001] mail queued while the SMTP server is down keeps its error and goes out once the server is back', async () => {
	const port = await freePort()
	const transport = createMailTransport(mailSettings({ SMTP_URL: `smtp://127.0.0.1:${port}` }))
	const queued = await enqueueMail(db, approvalMail())
	const id = queued?.id ?? ''

	const down = await deliverDueMail(db, transport, t0)
	expect(down.sent).toEqual([])
	expect(down.failed).toMatchObject([{ id, attempts: 1 }])
	expect(await outboxRow(id)).toMatchObject({
		attempts: 1,
		sentAt: null,
		nextAttemptAt: seconds(30),
		lastError: expect.stringMatching(/ECONNREFUSED/),
	})
	expect((await listOutbox(db, { limit: 10 }))[0]).toMatchObject({
		status: 'retrying',
		lastError: expect.stringMatching(/ECONNREFUSED/),
	})

	const smtp = await startFakeSmtp({ port, databaseUrl: process.env.DATABASE_URL ?? '' })
	try {
		// Not due yet: the back-off is respected even though the server is up again.
		expect((await deliverDueMail(db, transport, seconds(10))).sent).toEqual([])
		const back = await deliverDueMail(db, transport, seconds(30))
		expect(back.sent).toMatchObject([{ id }])
		expect(back.failed).toEqual([])
	} finally {
		transport.close()
		await smtp.stop()
	}
	const row = await outboxRow(id)
	expect(row).toMatchObject({ attempts: 1, sentAt: seconds(30), lastError: null })
	const received = await db.select().from(fakeMailbox)
	expect(received).toHaveLength(1)
	expect(received[0]).toMatchObject({
		envelopeFrom: 'no-reply@bandproof.test',
		envelopeTo: ['approver@lab.test'],
		messageId: row?.messageId,
		subject: 'Ready for approval: SPEC-0001 version 2, Lactose monohydrate',
	})
	expect((await listOutbox(db, { limit: 10 }))[0]).toMatchObject({ status: 'sent', nextAttemptAt: null })
	// Delivered once: a later round finds nothing to do.
	expect(await deliverDueMail(db, createMailTransport(mailSettings({})), seconds(3600))).toMatchObject({
		sent: [],
		failed: [],
	})
})

test('[MAIL-002] each failure doubles the wait from 30 s, capped at one hour; the error is kept', async () => {
	expect([1, 2, 3, 4, 7, 8, 50, 10_000].map(retryDelayMs)).toEqual([
		30_000, 60_000, 120_000, 240_000, 1_920_000, 3_600_000, 3_600_000, 3_600_000,
	])
	const queued = await enqueueMail(db, approvalMail())
	const id = queued?.id ?? ''
	const transport = failingTransport('452 4.2.2 Mailbox full, try later')
	let now = t0
	const waits: Array<number> = []
	for (let attempt = 1; attempt <= 4; attempt++) {
		const report = await deliverDueMail(db, transport, now)
		expect(report.failed).toMatchObject([{ id, attempts: attempt, error: '452 4.2.2 Mailbox full, try later' }])
		const row = await outboxRow(id)
		waits.push((row!.nextAttemptAt.getTime() - now.getTime()) / 1000)
		// One millisecond early the row is not due; at nextAttemptAt it is.
		expect((await deliverDueMail(db, transport, new Date(row!.nextAttemptAt.getTime() - 1))).failed).toEqual([])
		now = row!.nextAttemptAt
	}
	expect(waits).toEqual([30, 60, 120, 240])
	expect(await outboxRow(id)).toMatchObject({
		attempts: 4,
		sentAt: null,
		lastError: '452 4.2.2 Mailbox full, try later',
	})
})

test('[MAIL-003] a rolled-back workflow step queues nothing; a committed one keeps its mail', async () => {
	await expect(
		db.transaction(async (tx) => {
			await enqueueMail(tx, approvalMail({ subject: 'from the failed step' }))
			throw new Error('the step was refused after queuing its mail')
		}),
	).rejects.toThrow('the step was refused')
	expect(await db.select().from(mailOutbox)).toEqual([])

	await db.transaction(async (tx) => {
		await enqueueMail(tx, approvalMail({ subject: 'from the committed step' }))
	})
	expect((await db.select().from(mailOutbox)).map((row) => row.subject)).toEqual(['from the committed step'])
})

test('[MAIL-004] the fake SMTP server stores envelope, headers, both bodies and the raw message', async () => {
	const smtp = await startFakeSmtp({ databaseUrl: process.env.DATABASE_URL ?? '' })
	const transport = createMailTransport(mailSettings({ SMTP_URL: smtp.url, MAIL_FROM: 'QC Mail <qc-mail@lab.test>' }))
	try {
		const rendered = renderMail('rejected', {
			documentNumber: 'SPEC-0007',
			title: 'Microcrystalline cellulose',
			versionNumber: 3,
			actorName: 'Alex Approver',
			reason: 'Band at 1030 cm⁻¹ needs a <tighter> tolerance & a source.',
			link: 'http://localhost:3000/specifications/s/versions/v',
		})
		await enqueueMail(db, {
			...approvalMail(),
			...rendered,
			kind: 'rejected',
			to: ['author@lab.test', 'AUTHOR@lab.test', 'reviewer@lab.test'],
		})
		expect((await deliverDueMail(db, transport, t0)).sent).toHaveLength(1)
	} finally {
		transport.close()
		await smtp.stop()
	}
	const [message] = await db.select().from(fakeMailbox)
	expect(message).toMatchObject({
		envelopeFrom: 'qc-mail@lab.test',
		envelopeTo: ['author@lab.test', 'reviewer@lab.test'],
		subject: 'Returned to draft: SPEC-0007 version 3, Microcrystalline cellulose',
	})
	expect(message?.text).toContain('> Band at 1030 cm⁻¹ needs a <tighter> tolerance & a source.')
	expect(message?.text).toContain('Open the version: http://localhost:3000/specifications/s/versions/v')
	expect(message?.html).toContain('needs a &lt;tighter&gt; tolerance &amp; a source.')
	expect(message?.raw).toMatch(/^From: QC Mail <qc-mail@lab\.test>$/m)
	const [listed] = await listReceivedMail(db, { limit: 5 })
	expect(listed).toMatchObject({ from: 'qc-mail@lab.test', subject: message?.subject, text: message?.text })
})

test('[MAIL-005] without SMTP_URL mail stays queued with a clear reason, and leaves as soon as a server is configured', async () => {
	expect(mailSettings({})).toEqual({ smtpUrl: null, from: DEFAULT_MAIL_FROM })
	expect(() => mailSettings({ SMTP_URL: 'http://mail.example.org' })).toThrow(/SMTP_URL/)
	const queued = await enqueueMail(db, approvalMail())
	const id = queued?.id ?? ''
	const report = await deliverDueMail(db, createMailTransport(mailSettings({ SMTP_URL: '' })), t0)
	expect(report).toMatchObject({ sent: [], failed: [], unavailable: NO_SMTP_URL })
	expect(await outboxRow(id)).toMatchObject({
		attempts: 0,
		sentAt: null,
		nextAttemptAt: t0,
		lastError: 'no SMTP_URL configured',
	})
	expect((await listOutbox(db, { limit: 10 }))[0]).toMatchObject({
		status: 'queued',
		lastError: 'no SMTP_URL configured',
	})

	const smtp = await startFakeSmtp({ databaseUrl: process.env.DATABASE_URL ?? '' })
	const transport = createMailTransport(mailSettings({ SMTP_URL: smtp.url }))
	try {
		expect((await deliverDueMail(db, transport, seconds(5))).sent).toMatchObject([{ id }])
	} finally {
		transport.close()
		await smtp.stop()
	}
})

test('[MAIL-006] two workers delivering at once send each message exactly once (SKIP LOCKED)', async () => {
	for (let index = 0; index < 6; index++) await enqueueMail(db, approvalMail({ subject: `message ${index}` }))
	const sentSubjects: Array<string> = []
	const slow: MailTransport = {
		unavailable: null,
		async send(mail) {
			await new Promise((resolve) => setTimeout(resolve, 20))
			sentSubjects.push(mail.subject)
			return { messageId: `<${mail.subject.replace(' ', '-')}@test>` }
		},
		close: () => {},
	}
	const [first, second] = await Promise.all([deliverDueMail(db, slow, t0), deliverDueMail(db, slow, t0)])
	expect(first.sent.length + second.sent.length).toBe(6)
	expect(first.sent.length).toBeGreaterThan(0)
	expect(second.sent.length).toBeGreaterThan(0)
	expect([...sentSubjects].sort()).toEqual([
		'message 0',
		'message 1',
		'message 2',
		'message 3',
		'message 4',
		'message 5',
	])
})

test('[MAIL-007] an unreachable server ends the round after one failed connection; the rest wait their turn', async () => {
	for (let index = 0; index < 3; index++) await enqueueMail(db, approvalMail({ subject: `message ${index}` }))
	const transport = createMailTransport(mailSettings({ SMTP_URL: `smtp://127.0.0.1:${await freePort()}` }))
	const report = await deliverDueMail(db, transport, t0)
	transport.close()
	expect(report.failed).toHaveLength(1)
	const rows = await db.select().from(mailOutbox)
	expect(rows.filter((row) => row.attempts === 0)).toHaveLength(2)
})

test('[MAIL-008] the worker delivers in the background and stops cleanly', async () => {
	const smtp = await startFakeSmtp({ databaseUrl: process.env.DATABASE_URL ?? '' })
	const transport = createMailTransport(mailSettings({ SMTP_URL: smtp.url }))
	const reports: Array<number> = []
	await enqueueMail(db, approvalMail({ now: new Date(Date.now() - 1000) }))
	const worker = startMailWorker({
		intervalMs: 50,
		db,
		transport,
		onReport: (report) => reports.push(report.sent.length),
	})
	try {
		await expect.poll(() => reports.includes(1), { timeout: 5000 }).toBe(true)
		expect((await worker.runOnce()).sent).toEqual([])
		expect(await db.select().from(fakeMailbox)).toHaveLength(1)
	} finally {
		await worker.stop()
		transport.close()
		await smtp.stop()
	}
})

test('[MAIL-009] no recipient, no mail; invalid input is a bug and throws', async () => {
	expect(await enqueueMail(db, approvalMail({ to: [] }))).toBeNull()
	await expect(enqueueMail(db, approvalMail({ to: ['not an address'] }))).rejects.toThrow()
	expect(() =>
		renderMail('rejected', {
			documentNumber: 'SPEC-1',
			title: 'T',
			versionNumber: 1,
			actorName: 'A',
			link: 'http://x.test/',
		}),
	).toThrow()
	expect(await db.select().from(mailOutbox)).toEqual([])
})
