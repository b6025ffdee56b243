import { Link } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listMaterials, MaterialListQuerySchema } from '#app/.server/queries/materials.ts'
import { FilterBar, SelectFilter, TextFilter } from '#app/components/list-filters.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { Pager, SortHeader } from '#app/components/ui/pager.tsx'
import { can } from '#shared/authz/permissions.ts'

export async function loader({ context, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'material:read')
	const query = MaterialListQuerySchema.parse(Object.fromEntries(new URL(request.url).searchParams))
	const page = await listMaterials(db, query)
	return { query, ...page, canEdit: can(actor, 'material:edit') }
}

export default function MaterialsList({ loaderData }: Route.ComponentProps) {
	const { rows, total, pageCount, grades, query, canEdit } = loaderData
	const filtered = Boolean(query.q || query.grade)
	return (
		<>
			<PageHeader
				title="Materials"
				description="Starting materials identified by infrared spectroscopy."
				actions={
					canEdit ? (
						<Link to="/materials/new" className={buttonVariants()}>
							Register a material
						</Link>
					) : null
				}
			/>
			<FilterBar clearTo="/materials" filtered={filtered}>
				<TextFilter
					id="material-search"
					name="q"
					label="Search"
					defaultValue={query.q}
					placeholder="Code, name, synonym or CAS"
					className="w-72"
				/>
				<SelectFilter
					id="material-grade"
					name="grade"
					label="Grade"
					anyLabel="Any grade"
					defaultValue={query.grade}
					options={grades.map((grade) => ({ value: grade, label: grade }))}
					className="w-48"
				/>
				<input type="hidden" name="sort" value={query.sort} />
				<input type="hidden" name="dir" value={query.dir} />
			</FilterBar>
			{rows.length === 0 ? (
				<EmptyState title={filtered ? 'No material matches these filters' : 'No materials yet'}>
					{filtered
						? 'Try a shorter search, or clear the filters.'
						: canEdit
							? 'Register the first material to start.'
							: 'Materials registered by authors will be listed here.'}
				</EmptyState>
			) : (
				<>
					<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
						<table className="w-full text-sm">
							<caption className="sr-only">Materials, sorted by {query.sort}</caption>
							<thead className="border-rule bg-paper border-b">
								<tr>
									<SortHeader label="Code" sortKey="code" current={query.sort} dir={query.dir} />
									<SortHeader label="Name" sortKey="name" current={query.sort} dir={query.dir} />
									<SortHeader label="CAS RN" sortKey="cas" current={query.sort} dir={query.dir} />
									<th scope="col" className="px-3 py-2 text-left font-semibold">
										Formula
									</th>
									<SortHeader label="Grade" sortKey="grade" current={query.sort} dir={query.dir} />
									<SortHeader label="Last saved" sortKey="updated" current={query.sort} dir={query.dir} />
								</tr>
							</thead>
							<tbody>
								{rows.map((row) => (
									<tr key={row.id} className="border-rule hover:bg-paper border-b last:border-0">
										<td className="px-3 py-2 font-medium">
											<Link to={`/materials/${row.id}`} className="text-accent underline-offset-4 hover:underline">
												{row.code}
											</Link>
										</td>
										<td className="px-3 py-2">{row.name}</td>
										<td className="px-3 py-2 tabular-nums">{row.casNumber ?? '—'}</td>
										<td className="px-3 py-2">{row.formula ?? '—'}</td>
										<td className="px-3 py-2">{row.grade ?? '—'}</td>
										<td className="text-ink-soft px-3 py-2 tabular-nums">
											{new Date(row.updatedAt).toISOString().slice(0, 10)}
										</td>
									</tr>
								))}
							</tbody>
						</table>
					</div>
					<Pager page={query.page} pageCount={pageCount} total={total} noun="material" />
				</>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'Materials · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
