/**
 * A local stand-in for a mail server, for development, the demo and the tests: an SMTP server on 127.0.0.1
 * (no TLS, no authentication) that parses every message and stores it in the `fake_mailbox` table, where the
 * admin mailbox page shows it. The app reaches it exactly as it would a real server: nodemailer over SMTP_URL.
 *
 *   DATABASE_URL=postgres://… tsx scripts/fake-smtp.ts [--port 2525]
 *
 * `scripts/start.ts` and `scripts/e2e-server.ts` start it on a free port when SMTP_URL is not set.
 */
import type { AddressInfo } from 'node:net'
import { pathToFileURL } from 'node:url'
import { drizzle } from 'drizzle-orm/postgres-js'
import { simpleParser } from 'mailparser'
import postgres from 'postgres'
import { SMTPServer, type SMTPServerEnvelope } from 'smtp-server'
import { type Db, schema } from '#app/.server/db/client.ts'
import { fakeMailbox } from '#app/.server/db/schema/outbox.ts'

/** One message as the fake server received it. */
export type FakeMail = {
	receivedAt: Date
	envelopeFrom: string | null
	envelopeTo: Array<string>
	messageId: string | null
	subject: string | null
	text: string | null
	html: string | null
	raw: string
}

export type FakeSmtp = {
	port: number
	/** What to put in SMTP_URL, e.g. smtp://127.0.0.1:40123 */
	url: string
	/** Stops accepting connections, waits for the open ones, and closes the database pool it opened. */
	stop(): Promise<void>
}

/**
 * `port`: 0 or absent for a free port chosen by the system. Then either `databaseUrl`, to store each message in
 * that database's `fake_mailbox` table through a small pool of the server's own, or `onMessage`, which receives
 * each parsed message (when it rejects, the sender gets a temporary SMTP error and keeps the message).
 */
export type FakeSmtpOptions = { port?: number } & (
	{ databaseUrl: string } | { onMessage: (mail: FakeMail) => Promise<void> | void }
)

/** Largest message accepted (bytes); notifications are a few kilobytes. */
const MAX_MESSAGE_BYTES = 10 * 1024 * 1024

/** An onMessage that inserts into `fake_mailbox`. */
export function storeInMailbox(db: Db): (mail: FakeMail) => Promise<void> {
	return async (mail) => {
		await db.insert(fakeMailbox).values(mail)
	}
}

/** Starts the fake SMTP server on 127.0.0.1 and resolves once it listens. */
export async function startFakeSmtp(options: FakeSmtpOptions): Promise<FakeSmtp> {
	const pool = 'databaseUrl' in options ? postgres(options.databaseUrl, { max: 2, onnotice: () => {} }) : null
	const onMessage =
		'onMessage' in options
			? options.onMessage
			: storeInMailbox(drizzle({ client: pool!, schema, casing: 'snake_case' }))

	const server = new SMTPServer({
		secure: false,
		authOptional: true,
		disabledCommands: ['STARTTLS', 'AUTH'],
		logger: false,
		size: MAX_MESSAGE_BYTES,
		banner: 'Bandproof local test mail server',
		// Connections still open at stop() are cut after this long (the default is 30 s).
		closeTimeout: 2_000,
		onData(stream, session, callback) {
			const chunks: Array<Buffer> = []
			stream.on('data', (chunk: Buffer) => chunks.push(chunk))
			stream.on('error', (error) => callback(error))
			stream.on('end', () => {
				if (stream.sizeExceeded) {
					callback(Object.assign(new Error('Message too large for the local mail server'), { responseCode: 552 }))
					return
				}
				const raw = Buffer.concat(chunks)
				void receive(raw, session.envelope).then(
					() => callback(),
					(error: unknown) => {
						// 451: a temporary failure, so the sender keeps the message and tries again.
						const reason = error instanceof Error ? error.message : String(error)
						callback(Object.assign(new Error(`Could not store the message: ${reason}`), { responseCode: 451 }))
					},
				)
			})
		},
	})

	async function receive(raw: Buffer, envelope: SMTPServerEnvelope) {
		const parsed = await simpleParser(raw)
		await onMessage({
			receivedAt: new Date(),
			envelopeFrom: envelope.mailFrom && envelope.mailFrom.address ? envelope.mailFrom.address : null,
			envelopeTo: envelope.rcptTo.map((recipient) => recipient.address),
			messageId: parsed.messageId ?? null,
			subject: parsed.subject ?? null,
			text: parsed.text ?? null,
			html: typeof parsed.html === 'string' ? parsed.html : null,
			raw: raw.toString('utf8'),
		})
	}

	try {
		await new Promise<void>((resolve, reject) => {
			server.server.once('error', reject)
			server.listen(options.port ?? 0, '127.0.0.1', () => {
				server.server.off('error', reject)
				resolve()
			})
		})
	} catch (error) {
		await pool?.end({ timeout: 5 })
		throw error
	}
	const { port } = server.server.address() as AddressInfo
	// A client that disappears mid-session must not bring the process down.
	server.on('error', () => {})

	let stopping: Promise<void> | null = null
	return {
		port,
		url: `smtp://127.0.0.1:${port}`,
		stop() {
			stopping ??= new Promise<void>((resolve) => server.close(() => resolve())).then(() => pool?.end({ timeout: 5 }))
			return stopping
		},
	}
}

async function main(argv: ReadonlyArray<string>): Promise<void> {
	const portIndex = argv.indexOf('--port')
	const port = portIndex === -1 ? 2525 : Number(argv[portIndex + 1])
	const databaseUrl = process.env.DATABASE_URL
	if (!databaseUrl || !Number.isInteger(port) || port < 0 || port > 65_535) {
		throw new Error('Usage: DATABASE_URL=postgres://… tsx scripts/fake-smtp.ts [--port 2525]')
	}
	const smtp = await startFakeSmtp({ port, databaseUrl })
	console.log(`Fake SMTP server listening; set SMTP_URL=${smtp.url}`)
	for (const signal of ['SIGINT', 'SIGTERM'] as const) {
		process.on(signal, () => void smtp.stop().then(() => process.exit(0)))
	}
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
	main(process.argv.slice(2)).catch((error: unknown) => {
		process.stderr.write(`${error instanceof Error ? error.message : String(error)}\n`)
		process.exit(1)
	})
}
