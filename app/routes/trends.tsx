import { data, Form, Link } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/trends'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { materialsWithLots, trendPoints } from '#app/.server/queries/runs.ts'
import { inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { TrendChart } from '#app/components/trend-chart.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { VerdictBadge } from '#app/components/run-badges.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { cn } from '#app/utils/misc.ts'
import {
	correlationFocus,
	describeTrend,
	isBelowThreshold,
	summariseTrend,
	thresholdLines,
	type TrendGroup,
	TrendPointSchema,
} from '#shared/runs/trends.ts'

const TrendsQuerySchema = z.object({ material: z.uuid().optional() })

export async function loader({ request, context }: Route.LoaderArgs) {
	authorize(context, 'run:read')
	const query = TrendsQuerySchema.safeParse(Object.fromEntries(new URL(request.url).searchParams))
	if (!query.success)
		throw data(
			{ message: 'This link does not name a material. Open Trends from the menu and choose the material there.' },
			{ status: 400 },
		)
	const materials = await materialsWithLots(db)
	// Without a choice, the first material that has lots is shown, so the page is never blank for no reason.
	const material = query.data.material
		? materials.find((candidate) => candidate.id === query.data.material)
		: materials[0]
	if (query.data.material && !material)
		throw data({ message: 'No lot of this material is on record.' }, { status: 404 })
	const rows = material ? await trendPoints(db, material.id) : []
	const points = TrendPointSchema.array().parse(
		rows.map((row) => ({
			runId: row.runId,
			runNumber: row.runNumber,
			recordedAt: row.recordedAt.toISOString(),
			lotNumber: row.lotNumber,
			supplier: row.supplier,
			instrumentCode: row.instrumentCode,
			containerNumber: row.containerNumber,
			verdict: row.verdict,
			correlation: row.correlation,
			threshold: row.threshold,
			documentNumber: row.documentNumber,
			versionNumber: row.versionNumber,
		})),
	)
	const bySupplier = summariseTrend(points, 'supplier')
	const byInstrument = summariseTrend(points, 'instrumentCode')
	return {
		materials,
		material: material ?? null,
		points,
		thresholds: thresholdLines(points),
		focus: correlationFocus(points),
		bySupplier,
		byInstrument,
		description: describeTrend(points),
	}
}

export default function Trends({ loaderData }: Route.ComponentProps) {
	const { materials, material, points, thresholds, focus, bySupplier, byInstrument, description } = loaderData
	const materialLabel = material ? `${material.code} · ${material.name}` : null
	return (
		<>
			<PageHeader
				title="Trends"
				description="Every container's correlation with the reference spectrum, run by run, against the acceptance threshold of the specification it was tested under. A supplier or an instrument drifting shows here before a lot fails."
			/>
			<Form method="get" role="search" aria-label="Choose a material" className="mb-6 flex flex-wrap items-end gap-3">
				<div>
					<label htmlFor="trend-material" className="mb-1 block text-sm font-medium">
						Material
					</label>
					<select
						id="trend-material"
						name="material"
						defaultValue={material?.id ?? ''}
						disabled={materials.length === 0}
						className={cn(inputClass, 'w-80 disabled:cursor-not-allowed disabled:opacity-60')}
					>
						{materials.length === 0 ? <option value="">No material has been tested yet</option> : null}
						{materials.map((option) => (
							<option key={option.id} value={option.id}>
								{option.code} · {option.name}
							</option>
						))}
					</select>
				</div>
				<button type="submit" disabled={materials.length === 0} className={buttonVariants({ variant: 'secondary' })}>
					Show trend
				</button>
			</Form>

			{!material || !focus || points.length === 0 ? (
				<EmptyState title={material ? `No identity run of ${materialLabel} yet` : 'No identity runs yet'}>
					Trends appear once analysts have tested lots: each container's correlation is plotted against the
					specification's acceptance threshold.
				</EmptyState>
			) : (
				<div className="space-y-8">
					<section aria-labelledby="trend-chart-heading">
						<h2 id="trend-chart-heading" className="mb-1 text-lg font-bold">
							{materialLabel}
						</h2>
						<p className="text-ink-soft mb-3 max-w-4xl text-sm">{description}</p>
						<TrendChart
							points={points}
							thresholds={thresholds}
							focus={focus}
							suppliers={bySupplier.map((group) => group.key)}
							instruments={byInstrument.map((group) => group.key)}
							title={`Correlation of container samples with the reference over time, ${materialLabel}`}
							description={description}
						/>
					</section>

					<section aria-labelledby="trend-summary-heading">
						<h2 id="trend-summary-heading" className="mb-3 text-lg font-bold">
							By supplier and by instrument
						</h2>
						<div className="grid gap-4 2xl:grid-cols-2">
							<GroupTable caption="By supplier" heading="Supplier" groups={bySupplier} />
							<GroupTable caption="By instrument" heading="Instrument" groups={byInstrument} />
						</div>
					</section>

					<section aria-labelledby="trend-data-heading">
						<h2 id="trend-data-heading" className="mb-3 text-lg font-bold">
							Every container
						</h2>
						<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
							<table className="w-full text-sm">
								<caption className="sr-only">
									Container results of {materialLabel}, oldest run first, then by container
								</caption>
								<thead className="border-rule bg-paper border-b">
									<tr>
										{['Recorded (UTC)', 'Run', 'Lot', 'Supplier', 'Instrument', 'Container'].map((label) => (
											<th key={label} scope="col" className="px-3 py-2 text-left font-semibold whitespace-nowrap">
												{label}
											</th>
										))}
										<th scope="col" className="px-3 py-2 text-right font-semibold">
											Correlation
										</th>
										<th scope="col" className="px-3 py-2 text-right font-semibold">
											Minimum
										</th>
										<th scope="col" className="px-3 py-2 text-left font-semibold">
											Verdict
										</th>
									</tr>
								</thead>
								<tbody>
									{points.map((point) => (
										<tr
											key={`${point.runId}-${point.containerNumber}`}
											className="border-rule hover:bg-paper border-b last:border-0"
										>
											<td className="text-ink-soft px-3 py-1.5 whitespace-nowrap tabular-nums">
												{point.recordedAt.slice(0, 16).replace('T', ' ')}
											</td>
											<td className="px-3 py-1.5 font-medium whitespace-nowrap">
												<Link
													to={`/runs/${point.runId}/containers/${point.containerNumber}`}
													className="text-accent underline-offset-4 hover:underline"
												>
													{point.runNumber}
												</Link>
											</td>
											<td className="px-3 py-1.5 whitespace-nowrap">{point.lotNumber}</td>
											<td className="px-3 py-1.5">{point.supplier}</td>
											<td className="px-3 py-1.5">{point.instrumentCode}</td>
											<td className="px-3 py-1.5 tabular-nums">{point.containerNumber}</td>
											<td
												className={cn(
													'px-3 py-1.5 text-right tabular-nums',
													isBelowThreshold(point) && 'text-danger font-semibold',
												)}
											>
												{point.correlation === null ? '—' : point.correlation.toFixed(4)}
											</td>
											<td className="text-ink-soft px-3 py-1.5 text-right tabular-nums">
												{point.threshold}
												<span className="sr-only">
													{' '}
													({point.documentNumber} version {point.versionNumber})
												</span>
											</td>
											<td className="px-3 py-1.5 whitespace-nowrap">
												<VerdictBadge verdict={point.verdict} />
											</td>
										</tr>
									))}
								</tbody>
							</table>
						</div>
					</section>
				</div>
			)}
		</>
	)
}

const fixed = (value: number | null) => (value === null ? '—' : value.toFixed(4))

function GroupTable({ caption, heading, groups }: { caption: string; heading: string; groups: Array<TrendGroup> }) {
	return (
		<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
			<table className="w-full text-sm">
				<caption className="border-rule border-b px-3 py-2 text-left font-semibold">{caption}</caption>
				<thead className="border-rule bg-paper border-b">
					<tr>
						<th scope="col" className="px-3 py-2 text-left font-semibold">
							{heading}
						</th>
						{['Runs', 'Containers', 'Mean', 'Lowest', 'Below minimum'].map((label) => (
							<th key={label} scope="col" className="px-3 py-2 text-right font-semibold whitespace-nowrap">
								{label}
							</th>
						))}
					</tr>
				</thead>
				<tbody>
					{groups.map((group) => (
						<tr key={group.key} className="border-rule border-b last:border-0">
							<th scope="row" className="px-3 py-1.5 text-left font-medium whitespace-nowrap">
								{group.key}
							</th>
							<td className="px-3 py-1.5 text-right tabular-nums">{group.runs}</td>
							<td className="px-3 py-1.5 text-right tabular-nums">{group.containers}</td>
							<td className="px-3 py-1.5 text-right tabular-nums">{fixed(group.mean)}</td>
							<td className="px-3 py-1.5 text-right tabular-nums">{fixed(group.lowest)}</td>
							<td
								className={cn(
									'px-3 py-1.5 text-right tabular-nums',
									group.belowThreshold > 0 && 'text-danger font-semibold',
								)}
							>
								{group.belowThreshold}
								{group.shareBelow === null ? null : ` (${Math.round(group.shareBelow * 100)} %)`}
							</td>
						</tr>
					))}
				</tbody>
			</table>
		</div>
	)
}

export function meta() {
	return [{ title: 'Trends · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
