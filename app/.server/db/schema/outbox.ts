import { sql } from 'drizzle-orm'
import { index, integer, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core'

/** What a notification is about; each kind has its own template in app/.server/mail/templates.ts. */
export const MAIL_KINDS = [
	'review-requested',
	'redlines-posted',
	'ready-to-sign',
	'approved',
	'rejected',
	'effective',
] as const
export type MailKind = (typeof MAIL_KINDS)[number]

/**
 * Mail waiting to go out, or already sent. A workflow step inserts its rows in its own transaction, so a
 * rolled-back step sends nothing and a committed one cannot lose its mail; the mail worker delivers them
 * later and retries with back-off while the SMTP server is unreachable. Rows are kept after sending, as the
 * record of who was told what and when.
 */
export const mailOutbox = pgTable(
	'mail_outbox',
	{
		id: uuid().primaryKey().defaultRandom(),
		kind: text().$type<MailKind>().notNull(),
		/** Recipient addresses (plain `name@domain`, deduplicated). */
		to: text().array().notNull(),
		subject: text().notNull(),
		text: text().notNull(),
		html: text(),
		/** The record the mail is about, e.g. ('spec-version', <id>), for tracing and the mailbox page. */
		entityType: text(),
		entityId: text(),
		createdAt: timestamp({ withTimezone: true }).notNull(),
		/** Delivery attempts that failed so far (a successful one sets sentAt instead). */
		attempts: integer().notNull().default(0),
		/** The row is due when this time has come and sentAt is null. */
		nextAttemptAt: timestamp({ withTimezone: true }).notNull(),
		lastError: text(),
		sentAt: timestamp({ withTimezone: true }),
		/** Message-ID given by nodemailer, to find the message at the receiving server. */
		messageId: text(),
	},
	(table) => [
		index('mail_outbox_due_idx')
			.on(table.nextAttemptAt)
			.where(sql`sent_at is null`),
		index().on(table.createdAt),
		index().on(table.entityType, table.entityId),
	],
)

/**
 * What the local fake SMTP server (scripts/fake-smtp.ts) received, for development, the demo and the tests.
 * Stays empty when SMTP_URL points at a real mail server.
 */
export const fakeMailbox = pgTable(
	'fake_mailbox',
	{
		id: uuid().primaryKey().defaultRandom(),
		receivedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		/** MAIL FROM of the SMTP envelope; null for the null sender `<>`. */
		envelopeFrom: text(),
		/** RCPT TO addresses of the SMTP envelope: who actually received the message. */
		envelopeTo: text().array().notNull(),
		messageId: text(),
		subject: text(),
		text: text(),
		html: text(),
		/** The whole message as received (RFC 5322 source). */
		raw: text().notNull(),
	},
	(table) => [index().on(table.receivedAt)],
)
