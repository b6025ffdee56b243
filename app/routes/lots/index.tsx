import { Link } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listLots } from '#app/.server/queries/runs.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { DispositionBadge } from '#app/components/run-badges.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { can } from '#shared/authz/permissions.ts'

export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'run:read')
	return { lots: await listLots(db), canRecord: can(actor, 'run:record') }
}

export default function Lots({ loaderData }: Route.ComponentProps) {
	const { lots, canRecord } = loaderData
	return (
		<>
			<PageHeader
				title="Lots and identity runs"
				description="Incoming lots of starting materials, tested container by container against the effective specification."
				actions={
					canRecord ? (
						<Link to="/lots/new" className={buttonVariants()}>
							Test a new lot
						</Link>
					) : null
				}
			/>
			{lots.length === 0 ? (
				<EmptyState title="No lots tested yet">
					{canRecord ? 'Record the first lot with one sample spectrum per container.' : 'Analysts record lots here.'}
				</EmptyState>
			) : (
				<ListTable
					headers={[
						'Lot',
						'Material',
						'Supplier',
						{ label: 'Containers', align: 'right' },
						{ label: 'Runs', align: 'right' },
						'Last run',
						'Identity',
					]}
					caption="Lots, newest first"
				>
					{lots.map((lot) => (
						<tr key={lot.id} className="border-rule hover:bg-paper border-b last:border-0">
							<td className="px-3 py-2 font-medium">
								<Link to={`/lots/${lot.id}`} className="text-accent underline-offset-4 hover:underline">
									{lot.lotNumber}
								</Link>
							</td>
							<td className="px-3 py-2">
								{lot.materialCode} · {lot.materialName}
							</td>
							<td className="px-3 py-2">{lot.supplier}</td>
							<td className="px-3 py-2 text-right tabular-nums">{lot.containerCount}</td>
							<td className="px-3 py-2 text-right tabular-nums">{lot.runCount}</td>
							<td className="text-ink-soft px-3 py-2 tabular-nums">{lot.lastRunAt ? formatUtc(lot.lastRunAt) : '—'}</td>
							<td className="px-3 py-2">
								<DispositionBadge disposition={lot.disposition} />
							</td>
						</tr>
					))}
				</ListTable>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'Lots and identity runs · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
