import { Link } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listSpecifications, SpecificationListQuerySchema } from '#app/.server/queries/specifications.ts'
import { listMaterialChoices } from '#app/.server/queries/spectra.ts'
import { FilterBar, materialOptions, SearchFilter, SelectFilter } from '#app/components/list-filters.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { Pager } from '#app/components/ui/pager.tsx'
import { VersionStateBadge } from '#app/components/version-state-badge.tsx'
import { can } from '#shared/authz/permissions.ts'
import { VERSION_STATE_LABELS } from '#shared/specs/state-labels.ts'

export async function loader({ context, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'spec:read')
	const query = SpecificationListQuerySchema.parse(Object.fromEntries(new URL(request.url).searchParams))
	const [page, materials] = await Promise.all([listSpecifications(db, query), listMaterialChoices(db)])
	return { query, ...page, materials, canCreate: can(actor, 'spec:create') }
}

export default function SpecificationList({ loaderData }: Route.ComponentProps) {
	const { rows, total, pageCount, query, materials, owners, canCreate } = loaderData
	const filtered = Boolean(query.q || query.state || query.materialId || query.ownerId)
	return (
		<>
			<PageHeader
				title="Specifications"
				description="Controlled identity-test specifications. The state shown is that of each specification's latest version."
				actions={
					canCreate ? (
						<Link to="/specifications/new" className={buttonVariants()}>
							New specification
						</Link>
					) : null
				}
			/>
			<FilterBar
				clearTo="/specifications"
				filtered={filtered}
				live
				resultSummary={`${total} ${total === 1 ? 'specification' : 'specifications'} found`}
			>
				<SearchFilter
					id="spec-q"
					label="Search"
					defaultValue={query.q}
					placeholder="Number, title, material or CAS RN"
					className="w-72"
				/>
				<SelectFilter
					id="spec-state"
					name="state"
					label="State"
					anyLabel="Any state"
					defaultValue={query.state}
					options={Object.entries(VERSION_STATE_LABELS).map(([value, label]) => ({ value, label }))}
					className="w-40"
				/>
				<SelectFilter
					id="spec-material"
					name="materialId"
					label="Material"
					anyLabel="Any material"
					defaultValue={query.materialId}
					options={materialOptions(materials)}
				/>
				<SelectFilter
					id="spec-owner"
					name="ownerId"
					label="Owner"
					anyLabel="Anyone"
					defaultValue={query.ownerId}
					options={owners.map((owner) => ({ value: owner.id, label: owner.name }))}
					className="w-48"
				/>
			</FilterBar>
			{rows.length === 0 ? (
				<EmptyState
					title={
						query.q
							? `No specification matches “${query.q}”`
							: filtered
								? 'No specification matches these filters'
								: 'No specifications yet'
					}
				>
					{filtered
						? 'Check the spelling, try part of a document number, material code or CAS RN, or clear the filters to see every specification.'
						: canCreate
							? 'Start one for a registered material: you will draft its method, reference spectrum, band table and acceptance criteria.'
							: 'Specifications drafted by authors will be listed here.'}
				</EmptyState>
			) : (
				<>
					<ListTable headers={['Document', 'Title', 'Material', 'Version', 'Owner', 'Last change']}>
						{rows.map((row) => (
							<tr key={row.id} className="border-rule border-b last:border-0">
								<td className="px-3 py-2 font-medium whitespace-nowrap">
									<Link
										to={`/specifications/${row.id}/versions/${row.versionId}`}
										className="text-accent underline-offset-4 hover:underline"
									>
										{row.documentNumber}
									</Link>
								</td>
								<td className="px-3 py-2">{row.title}</td>
								<td className="px-3 py-2">
									{row.materialCode} · {row.materialName}
								</td>
								<td className="px-3 py-2 whitespace-nowrap">
									v{row.versionNumber} <VersionStateBadge state={row.state} />
								</td>
								<td className="px-3 py-2">{row.ownerName}</td>
								<td className="text-ink-soft px-3 py-2 tabular-nums">{row.updatedAt.slice(0, 10)}</td>
							</tr>
						))}
					</ListTable>
					<Pager page={query.page} pageCount={pageCount} total={total} noun="specification" />
				</>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'Specifications · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
