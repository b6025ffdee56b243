import { Form } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { AuditQuerySchema, listAuditEvents } from '#app/.server/queries/audit.ts'
import { inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { Pager } from '#app/components/ui/pager.tsx'
import { formatUtc } from '#app/utils/misc.ts'

export async function loader({ context, request }: Route.LoaderArgs) {
	authorize(context, 'audit:read')
	const query = AuditQuerySchema.parse(Object.fromEntries(new URL(request.url).searchParams))
	return { query, ...(await listAuditEvents(db, query)) }
}

function describeChange(before: unknown, after: unknown): string {
	const show = (value: unknown) => (value && typeof value === 'object' ? JSON.stringify(value) : '')
	const parts = [show(before) && `before ${show(before)}`, show(after) && `after ${show(after)}`].filter(Boolean)
	return parts.join(' → ')
}

export default function AuditTrail({ loaderData }: Route.ComponentProps) {
	const { rows, total, pageCount, query } = loaderData
	return (
		<>
			<PageHeader title="Audit trail" description="Every sign-in, change and decision, newest first. Events cannot be changed or removed." />
			<Form method="get" className="mb-4 flex flex-wrap items-end gap-3">
				<div>
					<label htmlFor="audit-actor" className="mb-1 block text-sm font-medium">Who</label>
					<input id="audit-actor" name="actor" defaultValue={query.actor ?? ''} placeholder="e-mail" className={`${inputClass} w-56`} />
				</div>
				<div>
					<label htmlFor="audit-action" className="mb-1 block text-sm font-medium">Action starts with</label>
					<input id="audit-action" name="action" defaultValue={query.action ?? ''} placeholder="e.g. user.sign" className={`${inputClass} w-56`} />
				</div>
				<button type="submit" className={buttonVariants({ variant: 'secondary' })}>Apply</button>
			</Form>
			{rows.length === 0 ? (
				<EmptyState title="No events match">Change or clear the filters.</EmptyState>
			) : (
				<>
					<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
						<table className="w-full text-sm">
							<thead className="border-rule bg-paper border-b">
								<tr>
									<th scope="col" className="px-3 py-2 text-left font-semibold">When</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">Who</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">What</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">Details</th>
								</tr>
							</thead>
							<tbody>
								{rows.map((row) => (
									<tr key={row.id} className="border-rule border-b align-top last:border-0">
										<td className="text-ink-soft px-3 py-2 whitespace-nowrap tabular-nums">{formatUtc(row.occurredAt)}</td>
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
