import { Link } from 'react-router'
import type { Route } from './+types/index'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listMaterialChoices, listSpectra, SpectrumListQuerySchema } from '#app/.server/queries/spectra.ts'
import { FilterBar, materialOptions, SearchFilter, SelectFilter } from '#app/components/list-filters.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { Pager } from '#app/components/ui/pager.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { can } from '#shared/authz/permissions.ts'
import { SPECTRUM_PURPOSE_LABELS } from '#shared/spectra/spectrum-metadata-schema.ts'

export async function loader({ context, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'spectrum:read')
	const query = SpectrumListQuerySchema.parse(Object.fromEntries(new URL(request.url).searchParams))
	const [page, materials] = await Promise.all([listSpectra(db, query), listMaterialChoices(db)])
	return { query, ...page, materials, canUpload: can(actor, 'spectrum:upload') }
}

export default function SpectraLibrary({ loaderData }: Route.ComponentProps) {
	const { rows, total, pageCount, query, materials, canUpload } = loaderData
	const filtered = Boolean(query.q || query.purpose || query.materialId)
	return (
		<>
			<PageHeader
				title="Spectra"
				description="Every uploaded spectrum with its original file and provenance. A spectrum that an approved specification uses can no longer change."
				actions={
					canUpload ? (
						<Link to="/spectra/upload" className={buttonVariants()}>
							Upload spectra
						</Link>
					) : null
				}
			/>
			<FilterBar
				clearTo="/spectra"
				filtered={filtered}
				live
				resultSummary={`${total} ${total === 1 ? 'spectrum' : 'spectra'} found`}
			>
				<SearchFilter
					id="spectra-q"
					label="Search"
					defaultValue={query.q}
					placeholder="File, title, lot, material or CAS RN"
					className="w-72"
				/>
				<SelectFilter
					id="spectra-purpose"
					name="purpose"
					label="Purpose"
					anyLabel="Any purpose"
					defaultValue={query.purpose}
					options={Object.entries(SPECTRUM_PURPOSE_LABELS).map(([value, label]) => ({ value, label }))}
				/>
				<SelectFilter
					id="spectra-material"
					name="materialId"
					label="Material"
					anyLabel="Any material"
					defaultValue={query.materialId}
					options={materialOptions(materials)}
				/>
			</FilterBar>
			{rows.length === 0 ? (
				<EmptyState
					title={
						query.q
							? `No spectrum matches “${query.q}”`
							: filtered
								? 'No spectrum matches these filters'
								: 'The library is empty'
					}
				>
					{filtered
						? 'Check the spelling, try part of a file name, material code or CAS RN, or clear the filters to see every spectrum.'
						: canUpload
							? 'Upload reference spectra of your materials to start: JCAMP-DX or XY text files.'
							: 'Spectra uploaded by authors will be listed here.'}
				</EmptyState>
			) : (
				<>
					<ListTable
						headers={['File', 'Material', 'Purpose', { label: 'Points', align: 'right' }, 'Range (cm⁻¹)', 'Uploaded']}
					>
						{rows.map((row) => (
							<tr key={row.id} className="border-rule border-b last:border-0">
								<td className="px-3 py-2">
									<Link
										to={`/spectra/${row.id}`}
										className="text-accent font-medium break-all underline-offset-4 hover:underline"
									>
										{row.fileName}
									</Link>
									{row.title && row.title !== row.fileName ? (
										<span className="text-ink-faint block text-xs">{row.title}</span>
									) : null}
								</td>
								<td className="px-3 py-2">{row.materialCode ? `${row.materialCode} · ${row.materialName}` : '—'}</td>
								<td className="px-3 py-2">
									<span className="capitalize">{row.purpose.replace('-', ' ')}</span>
									{row.locked ? (
										<span className="ml-2">
											<StatusBadge tone="neutral">Locked</StatusBadge>
										</span>
									) : null}
								</td>
								<td className="px-3 py-2 text-right tabular-nums">{row.points.toLocaleString('en')}</td>
								<td className="px-3 py-2 tabular-nums">
									{Math.round(row.maxWavenumber)}–{Math.round(row.minWavenumber)}
								</td>
								<td className="text-ink-soft px-3 py-2 tabular-nums">{row.uploadedAt.slice(0, 10)}</td>
							</tr>
						))}
					</ListTable>
					<Pager page={query.page} pageCount={pageCount} total={total} noun="spectrum" plural="spectra" />
				</>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'Spectra · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
