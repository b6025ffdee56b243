import { data, Link } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/$lotId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getLot } from '#app/.server/queries/runs.ts'
import { CautionNote } from '#app/components/caution-note.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { DispositionBadge, OutcomeBadge, RunStateBadge } from '#app/components/run-badges.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { CONCLUSION_LABELS } from '#shared/runs/run-rules.ts'

export async function loader({ context, params }: Route.LoaderArgs) {
	authorize(context, 'run:read')
	const lotId = z.uuid().safeParse(params.lotId)
	const lot = lotId.success ? await getLot(db, lotId.data) : null
	if (!lot) throw data({ message: 'This lot does not exist, or its address is wrong.' }, { status: 404 })
	return lot
}

export default function LotPage({ loaderData }: Route.ComponentProps) {
	const { lot, material, createdByName, runs, disposition } = loaderData
	const runNumber = new Map(runs.map((run) => [run.id, run.runNumber]))
	return (
		<>
			<PageHeader
				title={`Lot ${lot.lotNumber}`}
				description={`${material.code} · ${material.name}, from ${lot.supplier}`}
				actions={
					<Link to="/lots" className={buttonVariants({ variant: 'secondary' })}>
						All lots
					</Link>
				}
			/>
			<dl className="bg-sheet border-rule mb-6 grid max-w-4xl grid-cols-1 gap-x-8 gap-y-2 rounded-lg border p-5 text-sm sm:grid-cols-2">
				<div>
					<dt className="text-ink-faint">Identity</dt>
					<dd className="mt-0.5">
						<DispositionBadge disposition={disposition} />
					</dd>
				</div>
				<div>
					<dt className="text-ink-faint">Containers</dt>
					<dd className="tabular-nums">{lot.containerCount}</dd>
				</div>
				<div>
					<dt className="text-ink-faint">Received on</dt>
					<dd>{lot.receivedOn ?? '—'}</dd>
				</div>
				<div>
					<dt className="text-ink-faint">Recorded</dt>
					<dd>
						{formatUtc(lot.createdAt)} by {createdByName}
					</dd>
				</div>
			</dl>
			<h2 className="mb-2 text-lg font-semibold">Runs</h2>
			<ListTable
				headers={['Run', 'Recorded', 'Analyst', 'Instrument', 'Specification', 'Outcome', 'Signatures']}
				caption="Identity runs of this lot, oldest first"
				className="mb-6"
			>
				{runs.map((run) => (
					<tr key={run.id} className="border-rule border-b align-top last:border-0">
						<td className="px-3 py-2 font-medium">
							<Link to={`/runs/${run.id}`} className="text-accent underline-offset-4 hover:underline">
								{run.runNumber}
							</Link>
							{run.retestOfId ? (
								<span className="text-ink-soft block text-xs font-normal">
									retest of {runNumber.get(run.retestOfId) ?? 'an earlier run'}
								</span>
							) : null}
						</td>
						<td className="px-3 py-2 tabular-nums">{formatUtc(run.recordedAt)}</td>
						<td className="px-3 py-2">{run.recordedByName}</td>
						<td className="px-3 py-2">{run.instrumentCode}</td>
						<td className="px-3 py-2">
							{run.documentNumber} v{run.versionNumber}
						</td>
						<td className="px-3 py-2">
							<OutcomeBadge outcome={run.outcome} />
							{run.investigationConclusion ? (
								<span className="text-ink-soft block text-xs">{CONCLUSION_LABELS[run.investigationConclusion]}</span>
							) : run.outcome === 'flagged' ? (
								<span className="text-ink-soft block text-xs">Investigation open</span>
							) : null}
						</td>
						<td className="px-3 py-2">
							<RunStateBadge state={run.state} />
						</td>
					</tr>
				))}
			</ListTable>
			<CautionNote className="max-w-4xl" />
		</>
	)
}

export function meta({ data: loaded }: Route.MetaArgs) {
	return [{ title: `Lot ${loaded?.lot.lotNumber ?? ''} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
