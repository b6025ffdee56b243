import { Link } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listInspectableVersions } from '#app/.server/services/grants.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { VersionStateBadge } from '#app/components/version-state-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'

export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'inspection:read')
	return listInspectableVersions(db, actor.id, new Date())
}

export default function Inspection({ loaderData }: Route.ComponentProps) {
	const { grants, versions } = loaderData
	return (
		<>
			<PageHeader
				title="Inspection"
				description="Read-only access to released versions (effective, superseded, retired), their dossiers and audit extracts, for the time of your access grant."
			/>
			{grants.length === 0 ? (
				<EmptyState title="You have no current access grant">
					An administrator grants inspectors access to chosen specifications for a period. When your grant starts, the
					versions it covers appear here; when it ends, they disappear.
				</EmptyState>
			) : (
				<>
					<ul className="mb-4 space-y-1 text-sm" aria-label="Your access grants">
						{grants.map((grant) => (
							<li key={`${grant.purpose}-${grant.endsAt}`} className="bg-accent-soft rounded-md px-3 py-2">
								{grant.purpose}: {grant.all ? 'all specifications' : 'chosen specifications'}, until{' '}
								{formatUtc(grant.endsAt)}
							</li>
						))}
					</ul>
					{versions.length === 0 ? (
						<EmptyState title="Nothing released yet">
							The specifications your grant covers have no effective, superseded or retired version.
						</EmptyState>
					) : (
						<ListTable headers={['Document', 'Title', 'Material', 'Version', 'Effective since']}>
							{versions.map((version) => (
								<tr key={version.versionId} className="border-rule border-b last:border-0">
									<td className="px-3 py-2 font-medium whitespace-nowrap">
										<Link
											to={`/inspection/${version.versionId}`}
											className="text-accent underline-offset-4 hover:underline"
										>
											{version.documentNumber}
										</Link>
									</td>
									<td className="px-3 py-2">{version.title}</td>
									<td className="px-3 py-2">{version.materialName}</td>
									<td className="px-3 py-2 whitespace-nowrap">
										v{version.versionNumber} <VersionStateBadge state={version.state} />
									</td>
									<td className="text-ink-soft px-3 py-2 tabular-nums">{formatUtc(version.effectiveAt)}</td>
								</tr>
							))}
						</ListTable>
					)}
				</>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'Inspection · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
