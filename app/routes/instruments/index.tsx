import { Link } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listInstruments } from '#app/.server/services/instruments.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { ReadinessBadge } from '#app/components/run-badges.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { can } from '#shared/authz/permissions.ts'

export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'instrument:read')
	const rows = await listInstruments(db, new Date())
	return {
		canRegister: can(actor, 'instrument:manage'),
		rows: rows.map(({ instrument, latest, readiness }) => ({
			id: instrument.id,
			code: instrument.code,
			name: instrument.name,
			location: instrument.location,
			validityDays: instrument.checkValidityDays,
			latest,
			readiness: { usable: readiness.usable, reason: readiness.usable ? undefined : readiness.reason },
			message: readiness.message,
		})),
	}
}

const day = (date: Date | string) => new Date(date).toISOString().slice(0, 10)

export default function Instruments({ loaderData }: Route.ComponentProps) {
	const { rows, canRegister } = loaderData
	return (
		<>
			<PageHeader
				title="Instruments"
				description="Spectrometers used for identity runs. An instrument is usable only while its last polystyrene check passed and has not expired."
				actions={
					canRegister ? (
						<Link to="/instruments/new" className={buttonVariants()}>
							Register an instrument
						</Link>
					) : null
				}
			/>
			{rows.length === 0 ? (
				<EmptyState title="No instruments yet">
					{canRegister
						? 'Register the first instrument, then record its polystyrene check.'
						: 'Analysts register instruments here.'}
				</EmptyState>
			) : (
				<ListTable
					headers={['Code', 'Instrument', 'Location', 'Last check', 'Valid until', 'Status']}
					caption="Instruments and the state of their polystyrene checks"
				>
					{rows.map((row) => (
						<tr key={row.id} className="border-rule hover:bg-paper border-b last:border-0">
							<td className="px-3 py-2 font-medium">
								<Link to={`/instruments/${row.id}`} className="text-accent underline-offset-4 hover:underline">
									{row.code}
								</Link>
							</td>
							<td className="px-3 py-2">{row.name}</td>
							<td className="px-3 py-2">{row.location ?? '—'}</td>
							<td className="px-3 py-2 tabular-nums">
								{row.latest ? `${day(row.latest.performedAt)} · ${row.latest.passed ? 'passed' : 'failed'}` : '—'}
							</td>
							<td className="px-3 py-2 tabular-nums">{row.latest?.passed ? day(row.latest.validUntil) : '—'}</td>
							<td className="px-3 py-2" title={row.message}>
								<ReadinessBadge readiness={row.readiness} />
							</td>
						</tr>
					))}
				</ListTable>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'Instruments · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
