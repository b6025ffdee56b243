import { Form, Link } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listSpecifications, SpecificationListQuerySchema } from '#app/.server/queries/specifications.ts'
import { listMaterialChoices } from '#app/.server/queries/spectra.ts'
import { inputClass } from '#app/components/forms.tsx'
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
			<Form method="get" role="search" className="mb-4 flex flex-wrap items-end gap-3">
				<div>
					<label htmlFor="spec-q" className="mb-1 block text-sm font-medium">
						Search
					</label>
					<input
						id="spec-q"
						name="q"
						defaultValue={query.q ?? ''}
						placeholder="Number, title or material"
						className={`${inputClass} w-60`}
					/>
				</div>
				<div>
					<label htmlFor="spec-state" className="mb-1 block text-sm font-medium">
						State
					</label>
					<select id="spec-state" name="state" defaultValue={query.state ?? ''} className={`${inputClass} w-40`}>
						<option value="">Any state</option>
						{Object.entries(VERSION_STATE_LABELS).map(([value, label]) => (
							<option key={value} value={value}>
								{label}
							</option>
						))}
					</select>
				</div>
				<div>
					<label htmlFor="spec-material" className="mb-1 block text-sm font-medium">
						Material
					</label>
					<select
						id="spec-material"
						name="materialId"
						defaultValue={query.materialId ?? ''}
						className={`${inputClass} w-56`}
					>
						<option value="">Any material</option>
						{materials.map((material) => (
							<option key={material.id} value={material.id}>
								{material.code} · {material.name}
							</option>
						))}
					</select>
				</div>
				<div>
					<label htmlFor="spec-owner" className="mb-1 block text-sm font-medium">
						Owner
					</label>
					<select id="spec-owner" name="ownerId" defaultValue={query.ownerId ?? ''} className={`${inputClass} w-48`}>
						<option value="">Anyone</option>
						{owners.map((owner) => (
							<option key={owner.id} value={owner.id}>
								{owner.name}
							</option>
						))}
					</select>
				</div>
				<button type="submit" className={buttonVariants({ variant: 'secondary' })}>
					Apply
				</button>
				{filtered ? (
					<Link to="/specifications" className={buttonVariants({ variant: 'quiet' })}>
						Clear filters
					</Link>
				) : null}
			</Form>
			{rows.length === 0 ? (
				<EmptyState title={filtered ? 'No specification matches these filters' : 'No specifications yet'}>
					{filtered
						? 'Clear the filters to see every specification.'
						: canCreate
							? 'Start one for a registered material: you will draft its method, reference spectrum, band table and acceptance criteria.'
							: 'Specifications drafted by authors will be listed here.'}
				</EmptyState>
			) : (
				<>
					<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
						<table className="w-full text-sm">
							<thead className="border-rule bg-paper border-b">
								<tr>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Document
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Title
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Material
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Version
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Owner
									</th>
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Last change
									</th>
								</tr>
							</thead>
							<tbody>
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
							</tbody>
						</table>
					</div>
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
