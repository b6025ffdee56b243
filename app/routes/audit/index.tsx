import { Form } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { AuditQuerySchema, listAuditEvents } from '#app/.server/queries/audit.ts'
import { verifyAuditChain } from '#app/.server/queries/audit-chain.ts'
import { inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { Pager } from '#app/components/ui/pager.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { can } from '#shared/authz/permissions.ts'

export async function loader({ context, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'audit:read')
	const url = new URL(request.url)
	const query = AuditQuerySchema.parse(Object.fromEntries(url.searchParams))
	const canVerify = can(actor, 'user:manage')
	const verification = canVerify && url.searchParams.get('verify') === '1' ? await verifyAuditChain(db) : null
	const exportQuery = new URLSearchParams(url.searchParams)
	exportQuery.delete('page')
	exportQuery.delete('verify')
	return {
		query,
		...(await listAuditEvents(db, query)),
		canVerify,
		verification,
		exportHref: `/audit/export.csv?${exportQuery.toString()}`,
	}
}

/** What an event can be about (the `entityType` the services record), in the words of the lab. */
const ENTITY_LABELS: Record<string, string> = {
	user: 'User',
	material: 'Material',
	spectrum: 'Spectrum',
	specification: 'Specification',
	'spec-version': 'Specification version',
	dossier: 'Dossier',
	instrument: 'Instrument',
	lot: 'Lot',
	'identity-run': 'Identity run',
	grant: 'Inspector access',
	'api-key': 'API key',
	audit: 'Audit trail',
}

function describeChange(before: unknown, after: unknown): string {
	const show = (value: unknown) => (value && typeof value === 'object' ? JSON.stringify(value) : '')
	const parts = [show(before) && `before ${show(before)}`, show(after) && `after ${show(after)}`].filter(Boolean)
	return parts.join(' → ')
}

export default function AuditTrail({ loaderData }: Route.ComponentProps) {
	const { rows, total, pageCount, query, canVerify, verification, exportHref } = loaderData
	return (
		<>
			<PageHeader
				title="Audit trail"
				description="Every sign-in, change, signature and download, newest first. Events cannot be changed or removed, and each is chained to the one before it by its hash."
				actions={
					<>
						<a href={exportHref} className={buttonVariants({ variant: 'secondary' })} download>
							Export CSV
						</a>
						{canVerify ? (
							<Form method="get">
								<input type="hidden" name="verify" value="1" />
								<button type="submit" className={buttonVariants({ variant: 'secondary' })}>
									Verify the chain
								</button>
							</Form>
						) : null}
					</>
				}
			/>
			{verification ? (
				verification.breaks.length === 0 ? (
					<p
						role="status"
						className="border-good bg-good-soft mb-4 rounded-md border-l-4 px-4 py-3 text-sm"
						data-testid="chain-result"
					>
						The chain is intact: all {verification.checked} events match their hashes and links.
					</p>
				) : (
					<div
						role="alert"
						className="border-danger bg-danger-soft mb-4 rounded-md border-l-4 px-4 py-3 text-sm"
						data-testid="chain-result"
					>
						<p className="font-semibold">
							The chain is broken at {verification.breaks.length} place{verification.breaks.length === 1 ? '' : 's'} (of{' '}
							{verification.checked} events). Someone changed the trail outside the application; report it to QA.
						</p>
						<ul className="mt-1 list-disc pl-5">
							{verification.breaks.map((item) => (
								<li key={`${item.eventId}-${item.problem}`}>
									Event {item.eventId}: {item.problem}
								</li>
							))}
						</ul>
					</div>
				)
			) : null}
			<Form method="get" className="mb-4 flex flex-wrap items-end gap-3">
				<div>
					<label htmlFor="audit-actor" className="mb-1 block text-sm font-medium">
						Who
					</label>
					<input
						id="audit-actor"
						name="actor"
						defaultValue={query.actor ?? ''}
						placeholder="e-mail"
						className={`${inputClass} w-56`}
					/>
				</div>
				<div>
					<label htmlFor="audit-action" className="mb-1 block text-sm font-medium">
						Action starts with
					</label>
					<input
						id="audit-action"
						name="action"
						defaultValue={query.action ?? ''}
						placeholder="e.g. user.sign"
						className={`${inputClass} w-56`}
					/>
				</div>
				<div>
					<label htmlFor="audit-entity" className="mb-1 block text-sm font-medium">
						About
					</label>
					<select
						id="audit-entity"
						name="entityType"
						defaultValue={query.entityType ?? ''}
						className={`${inputClass} w-48`}
					>
						<option value="">Anything</option>
						{Object.entries(ENTITY_LABELS).map(([type, label]) => (
							<option key={type} value={type}>
								{label}
							</option>
						))}
					</select>
				</div>
				<div>
					<label htmlFor="audit-since" className="mb-1 block text-sm font-medium">
						From
					</label>
					<input
						id="audit-since"
						type="date"
						name="since"
						defaultValue={query.since ?? ''}
						className={`${inputClass} w-40`}
					/>
				</div>
				<div>
					<label htmlFor="audit-until" className="mb-1 block text-sm font-medium">
						To
					</label>
					<input
						id="audit-until"
						type="date"
						name="until"
						defaultValue={query.until ?? ''}
						className={`${inputClass} w-40`}
					/>
				</div>
				<button type="submit" className={buttonVariants({ variant: 'secondary' })}>
					Apply
				</button>
			</Form>
			{rows.length === 0 ? (
				<EmptyState title="No events match">Change or clear the filters.</EmptyState>
			) : (
				<>
					<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
						<table className="w-full text-sm">
							<thead className="border-rule bg-paper border-b">
								<tr>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										When
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Who
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										What
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Details
									</th>
								</tr>
							</thead>
							<tbody>
								{rows.map((row) => (
									<tr key={row.id} className="border-rule border-b align-top last:border-0">
										<td className="text-ink-soft px-3 py-2 whitespace-nowrap tabular-nums">
											{formatUtc(row.occurredAt)}
										</td>
										<td className="px-3 py-2">{row.actorLabel}</td>
										<td className="px-3 py-2 font-mono text-xs">{row.action}</td>
										<td className="text-ink-soft px-3 py-2 text-xs break-all">
											{describeChange(row.before, row.after)}
											{row.reason ? <span className="block">Reason: {row.reason}</span> : null}
										</td>
									</tr>
								))}
							</tbody>
						</table>
					</div>
					<Pager page={query.page} pageCount={pageCount} total={total} noun="event" />
				</>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'Audit trail · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
