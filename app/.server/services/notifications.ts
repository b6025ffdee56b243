import { and, eq, inArray, isNull } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import type { MailKind } from '#app/.server/db/schema/outbox.ts'
import { userRoles } from '#app/.server/db/schema/roles.ts'
import { enqueueMail } from '#app/.server/mail/outbox.ts'
import { renderMail } from '#app/.server/mail/templates.ts'
import type { NotificationTemplate, Recipient } from '#shared/workflow/spec-version-machine.ts'

/** Which mail each workflow notification sends; steps without a mail of their own send none. */
const MAIL_FOR: Partial<Record<NotificationTemplate, MailKind>> = {
	'review-requested': 'review-requested',
	'ready-to-approve': 'ready-to-sign',
	approved: 'approved',
	rejected: 'rejected',
	effective: 'effective',
}

/** The address people open the app at (links in mail). */
export function publicBaseUrl(): string {
	return process.env.BETTER_AUTH_URL ?? `http://localhost:${process.env.PORT ?? 3000}`
}

/** E-mail addresses of active accounts matching the recipients (by role or by id). */
export async function recipientAddresses(db: Db, to: ReadonlyArray<Recipient>): Promise<Array<string>> {
	const roles = to.flatMap((recipient) => ('role' in recipient ? [recipient.role] : []))
	const ids = to.flatMap((recipient) => ('userId' in recipient ? [recipient.userId] : []))
	const byRole = roles.length
		? await db
				.select({ email: users.email })
				.from(users)
				.innerJoin(userRoles, eq(userRoles.userId, users.id))
				.where(and(inArray(userRoles.role, roles), isNull(users.deactivatedAt)))
		: []
	const byId = ids.length
		? await db
				.select({ email: users.email })
				.from(users)
				.where(and(inArray(users.id, ids), isNull(users.deactivatedAt)))
		: []
	return [...new Set([...byRole, ...byId].map((row) => row.email))]
}

type MailInput = {
	to: ReadonlyArray<Recipient>
	specification: { id: string; documentNumber: string; title: string }
	version: { id: string; versionNumber: number }
	actorName: string
	reason: string | null
	effectiveFrom: Date | null
	now: Date
}

/**
 * Queues the mail of one workflow notification in the step's own transaction: it commits with the step and
 * is sent afterwards by the mail worker, so an SMTP outage never blocks or undoes the step.
 */
export async function queueWorkflowMail(db: Db, input: MailInput & { template: NotificationTemplate }): Promise<void> {
	const kind = MAIL_FOR[input.template]
	if (kind) await queueMail(db, { ...input, kind })
}

/** Queues one notification of a kind to the recipients, in the caller's transaction. */
export async function queueMail(
	db: Db,
	input: {
		kind: MailKind
		to: ReadonlyArray<Recipient>
		specification: { id: string; documentNumber: string; title: string }
		version: { id: string; versionNumber: number }
		actorName: string
		reason: string | null
		effectiveFrom: Date | null
		now: Date
	},
): Promise<void> {
	const { kind } = input
	const addresses = await recipientAddresses(db, input.to)
	if (addresses.length === 0) return
	const mail = renderMail(kind, {
		documentNumber: input.specification.documentNumber,
		title: input.specification.title,
		versionNumber: input.version.versionNumber,
		actorName: input.actorName,
		reason: input.reason ?? undefined,
		effectiveFrom: input.effectiveFrom ?? undefined,
		link: `${publicBaseUrl()}/specifications/${input.specification.id}/versions/${input.version.id}`,
	})
	await enqueueMail(db, {
		to: addresses,
		...mail,
		kind,
		entityType: 'spec-version',
		entityId: input.version.id,
		now: input.now,
	})
}
