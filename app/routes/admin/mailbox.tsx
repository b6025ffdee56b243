import type { Route } from './+types/mailbox'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import type { MailKind } from '#app/.server/db/schema/outbox.ts'
import { listOutbox, listReceivedMail, type OutboxStatus } from '#app/.server/mail/outbox.ts'
import { mailSettings } from '#app/.server/mail/transport.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'

/** Rows shown per list: the newest ones. */
const LIMIT = 100

/** Where mail goes, without credentials: host and port of SMTP_URL, or why nothing is sent. */
function deliveryTarget(): { server: string | null; problem: string | null } {
	try {
		const { smtpUrl } = mailSettings()
		if (!smtpUrl) return { server: null, problem: 'No SMTP_URL is configured, so mail stays queued until one is set.' }
		const url = new URL(smtpUrl)
		return { server: `${url.protocol}//${url.host}`, problem: null }
	} catch {
		return { server: null, problem: 'SMTP_URL is not a valid smtp:// or smtps:// URL, so mail stays queued.' }
	}
}

export async function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'mailbox:read')
	const [outbox, received] = await Promise.all([
		listOutbox(db, { limit: LIMIT }),
		listReceivedMail(db, { limit: LIMIT }),
	])
	return { outbox, received, delivery: deliveryTarget(), limit: LIMIT }
}

const KIND_LABELS: Record<MailKind, string> = {
	'review-requested': 'Review requested',
	'redlines-posted': 'Redlines posted',
	'ready-to-sign': 'Ready for approval',
	approved: 'Approved',
	rejected: 'Returned to draft',
	effective: 'Effective',
}

const STATUS_LABELS: Record<OutboxStatus, { label: string; tone: 'good' | 'caution' | 'neutral' }> = {
	sent: { label: 'Sent', tone: 'good' },
	queued: { label: 'Queued', tone: 'neutral' },
	retrying: { label: 'Retrying', tone: 'caution' },
}

export default function MailboxPage({ loaderData }: Route.ComponentProps) {
	const { outbox, received, delivery, limit } = loaderData
	return (
		<>
			<PageHeader
				title="Outgoing mail"
				description="The notifications Bandproof sends, newest first: whether each has gone out, and what the local mail server received."
			/>

			<section aria-labelledby="delivery-heading" className="mb-8">
				<h2 id="delivery-heading" className="mb-1 text-lg font-bold">
					Delivery
				</h2>
				<p className="text-ink-soft mb-3 text-sm">
					{delivery.server ? <>Sent through {delivery.server}. </> : null}
					{delivery.problem ? <span className="text-caution">{delivery.problem} </span> : null}
					Failed attempts are retried with growing pauses, up to one hour apart; nothing is dropped.
				</p>
				{outbox.length === 0 ? (
					<EmptyState title="No mail yet">
						Review requests, redline notices, approvals and rejections will be listed here as they are queued.
					</EmptyState>
				) : (
					<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
						<table className="w-full text-sm">
							<caption className="sr-only">Delivery status of the {limit} newest notifications</caption>
							<thead className="border-rule bg-paper border-b">
								<tr>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Queued
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										About
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										To
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Subject
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Status
									</th>
								</tr>
							</thead>
							<tbody>
								{outbox.map((mail) => {
									const status = STATUS_LABELS[mail.status]
									return (
										<tr key={mail.id} className="border-rule border-b align-top last:border-0">
											<td className="text-ink-soft px-3 py-2 whitespace-nowrap tabular-nums">
												{formatUtc(mail.createdAt)}
											</td>
											<td className="px-3 py-2 whitespace-nowrap">{KIND_LABELS[mail.kind] ?? mail.kind}</td>
											<td className="px-3 py-2 break-all">{mail.to.join(', ')}</td>
											<td className="px-3 py-2">{mail.subject}</td>
											<td className="px-3 py-2">
												<StatusBadge tone={status.tone}>{status.label}</StatusBadge>
												<span className="text-ink-soft mt-1 block text-xs tabular-nums">
													{mail.sentAt
														? `at ${formatUtc(mail.sentAt)}`
														: mail.attempts > 0
															? `${mail.attempts} failed ${mail.attempts === 1 ? 'attempt' : 'attempts'}; next ${formatUtc(mail.nextAttemptAt)}`
															: null}
												</span>
												{mail.lastError && !mail.sentAt ? (
													<span className="text-ink-soft mt-1 block text-xs break-all">
														Last error: {mail.lastError}
													</span>
												) : null}
											</td>
										</tr>
									)
								})}
							</tbody>
						</table>
					</div>
				)}
			</section>

			<section aria-labelledby="received-heading">
				<h2 id="received-heading" className="mb-1 text-lg font-bold">
					Received by the local mail server
				</h2>
				<p className="text-ink-soft mb-3 text-sm">
					In development, the demo and the tests, a mail server on this machine receives everything Bandproof sends.
					Open a message to read it as its recipients did.
				</p>
				{received.length === 0 ? (
					<EmptyState title="No messages received">
						When SMTP_URL points at your organisation&apos;s mail server, messages are delivered there instead and only
						their delivery status appears above.
					</EmptyState>
				) : (
					<ul
						className="bg-sheet border-rule divide-rule divide-y rounded-lg border"
						aria-label={`The ${limit} newest messages received`}
					>
						{received.map((message) => (
							<li key={message.id}>
								<details>
									<summary className="hover:bg-paper cursor-pointer px-3 py-2 text-sm">
										<span className="inline-flex flex-wrap items-baseline gap-x-4 gap-y-1">
											<span className="text-ink-soft whitespace-nowrap tabular-nums">
												{formatUtc(message.receivedAt)}
											</span>
											<span className="break-all">{message.to.join(', ')}</span>
											<span className="font-medium">{message.subject ?? '(no subject)'}</span>
										</span>
									</summary>
									<div className="border-rule border-t px-3 py-3">
										<p className="text-ink-soft mb-2 text-xs">From {message.from ?? '(no sender)'}</p>
										<pre className="font-sans text-sm whitespace-pre-wrap">
											{message.text ?? '(no plain-text body)'}
										</pre>
									</div>
								</details>
							</li>
						))}
					</ul>
				)}
			</section>
		</>
	)
}

export function meta() {
	return [{ title: 'Outgoing mail · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
