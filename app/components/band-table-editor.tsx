import { useEffect, useState } from 'react'
import { useFetcher } from 'react-router'
import { Button } from '#app/components/ui/button.tsx'
import { cn } from '#app/utils/misc.ts'
import type { BandRowProblem } from '#shared/specs/band-table.ts'
import type { BandRow } from '#shared/specs/version-content.ts'

type Suggestion = {
	position: number
	assignment: string
	intensityClass: BandRow['intensityClass']
	shape: BandRow['shape']
	required: boolean
	relative: number
}
type SuggestionPayload = { rows: Array<Suggestion>; caveat: string; message: string | null }

const INTENSITY_LABELS: Record<BandRow['intensityClass'], string> = {
	vs: 'very strong',
	s: 'strong',
	m: 'medium',
	w: 'weak',
	vw: 'very weak',
	v: 'variable',
}
const cell = 'rounded border border-rule-strong bg-sheet px-2 py-1 text-sm aria-[invalid=true]:border-danger'

let counter = 0
function newRowId(): string {
	counter += 1
	return `band-${Date.now().toString(36)}-${counter}`
}

const BAND_COLUMNS = ['Position (cm⁻¹)', '± cm⁻¹', 'Assignment', 'Intensity', 'Shape', 'Required'] as const

/** The header row shared by the read-only band table and the editor. */
function BandTableHead({ cellClass, withActions = false }: { cellClass: string; withActions?: boolean }) {
	return (
		<thead>
			<tr className="border-rule border-b text-left">
				{BAND_COLUMNS.map((column) => (
					<th key={column} scope="col" className={cn(cellClass, 'font-semibold')}>
						{column}
					</th>
				))}
				{withActions ? (
					<th scope="col" className={cellClass}>
						<span className="sr-only">Row actions</span>
					</th>
				) : null}
			</tr>
		</thead>
	)
}

/** The band table of a version that can no longer be edited, as plain text. */
export function BandTableView({ rows }: { rows: Array<BandRow> }) {
	return (
		<section aria-labelledby="band-table-heading">
			<h3 id="band-table-heading" className="mb-2 text-base font-bold">
				Band table{' '}
				<span className="text-ink-faint text-sm font-normal">
					({rows.length} {rows.length === 1 ? 'band' : 'bands'})
				</span>
			</h3>
			{rows.length === 0 ? (
				<p className="text-ink-soft text-sm">No bands.</p>
			) : (
				<table className="w-full text-sm">
					<BandTableHead cellClass="py-1.5 pr-3" />
					<tbody>
						{rows.map((row) => (
							<tr key={row.id} className="border-rule border-b last:border-0">
								<td className="py-1 pr-3 tabular-nums">{row.position}</td>
								<td className="py-1 pr-3 tabular-nums">{row.tolerance ?? 'default'}</td>
								<td className="py-1 pr-3">{row.assignment || '—'}</td>
								<td className="py-1 pr-3">{INTENSITY_LABELS[row.intensityClass]}</td>
								<td className="py-1 pr-3">{row.shape}</td>
								<td className="py-1">{row.required ? 'yes' : 'no'}</td>
							</tr>
						))}
					</tbody>
				</table>
			)}
		</section>
	)
}

/**
 * The band table of a draft: rows of position, tolerance, assignment, intensity class, shape and whether the
 * band is required; add, remove and reorder; fill from the reference's peaks. The rows travel with the draft
 * form as one JSON field named `name`, so they are saved (and refused) together with the rest of the draft.
 */
export function BandTableEditor({
	name,
	initialRows,
	problems,
	suggestionsUrl,
}: {
	name: string
	initialRows: Array<BandRow>
	problems: Array<BandRowProblem>
	suggestionsUrl: string
}) {
	const [rows, setRows] = useState(initialRows)
	const suggestions = useFetcher<SuggestionPayload>()
	useEffect(() => setRows(initialRows), [initialRows])

	const update = (id: string, patch: Partial<BandRow>) =>
		setRows((current) => current.map((row) => (row.id === id ? { ...row, ...patch } : row)))
	const move = (index: number, by: -1 | 1) =>
		setRows((current) => {
			const next = [...current]
			const [row] = next.splice(index, 1)
			next.splice(index + by, 0, row!)
			return next
		})
	const add = (suggestion?: Suggestion) =>
		setRows((current) => [
			...current,
			{
				id: newRowId(),
				position: suggestion?.position ?? 0,
				tolerance: null,
				assignment: suggestion?.assignment ?? '',
				intensityClass: suggestion?.intensityClass ?? 'm',
				shape: suggestion?.shape ?? 'sharp',
				required: suggestion?.required ?? true,
			},
		])
	const inTable = (position: number) => rows.some((row) => Math.abs(row.position - position) < 1)
	const problemsOf = (id: string) => problems.filter((problem) => problem.rowId === id)
	const pending = suggestions.data?.rows.filter((suggestion) => !inTable(suggestion.position)) ?? []

	return (
		<section aria-labelledby="band-table-heading" className="space-y-3">
			<input type="hidden" name={name} value={JSON.stringify(rows)} />
			<div className="flex flex-wrap items-center justify-between gap-2">
				<h3 id="band-table-heading" className="text-base font-bold">
					Band table{' '}
					<span className="text-ink-faint text-sm font-normal">
						({rows.length} {rows.length === 1 ? 'band' : 'bands'})
					</span>
				</h3>
				{
					<div className="flex gap-2">
						<Button
							variant="secondary"
							size="sm"
							onClick={() => suggestions.load(suggestionsUrl)}
							disabled={suggestions.state === 'loading'}
						>
							{suggestions.state === 'loading' ? 'Reading the reference…' : 'Suggest from the reference'}
						</Button>
						<Button variant="secondary" size="sm" onClick={() => add()}>
							Add a band
						</Button>
					</div>
				}
			</div>
			{suggestions.data ? (
				<div className="border-accent bg-accent-soft rounded-md border p-3 text-sm" aria-live="polite">
					{suggestions.data.message ? (
						<p>{suggestions.data.message}</p>
					) : (
						<>
							<div className="flex items-center justify-between gap-2">
								<p className="font-semibold">
									{pending.length
										? `${pending.length} bands suggested from the reference's peaks`
										: 'Every suggested band is in the table.'}
								</p>
								{pending.length ? (
									<Button size="sm" onClick={() => pending.forEach((suggestion) => add(suggestion))}>
										Add all suggested bands
									</Button>
								) : null}
							</div>
							<p className="text-ink-soft mt-1 text-xs">{suggestions.data.caveat}</p>
							<ul className="mt-2 grid gap-1 sm:grid-cols-2">
								{pending.map((suggestion) => (
									<li
										key={suggestion.position}
										className="bg-sheet flex items-center justify-between gap-2 rounded px-2 py-1"
									>
										<span>
											<span className="font-medium tabular-nums">{suggestion.position} cm⁻¹</span>{' '}
											<span className="text-ink-soft">
												{suggestion.assignment || INTENSITY_LABELS[suggestion.intensityClass]}
											</span>
										</span>
										<Button
											size="sm"
											variant="quiet"
											onClick={() => add(suggestion)}
											aria-label={`Add the band at ${suggestion.position} cm⁻¹`}
										>
											Add
										</Button>
									</li>
								))}
							</ul>
						</>
					)}
				</div>
			) : null}
			{rows.length === 0 ? (
				<p className="text-ink-soft text-sm">
					No bands yet. Suggest them from the reference spectrum, or add them one by one.
				</p>
			) : (
				<div className="overflow-x-auto">
					<table className="w-full text-sm">
						<BandTableHead cellClass="px-1 py-1.5" withActions />
						<tbody>
							{rows.map((row, index) => {
								const rowProblems = problemsOf(row.id)
								const label = `band ${index + 1}`
								return (
									<tr
										key={row.id}
										className={cn('border-rule border-b align-top', rowProblems.length ? 'bg-danger-soft' : '')}
									>
										<td className="px-1 py-1">
											<input
												aria-label={`Position of ${label}`}
												type="number"
												step="0.1"
												value={row.position || ''}
												onChange={(event) => update(row.id, { position: Number(event.currentTarget.value) })}
												className={cn(cell, 'w-24 tabular-nums')}
												aria-invalid={rowProblems.some((problem) => problem.field !== 'tolerance') || undefined}
											/>
										</td>
										<td className="px-1 py-1">
											<input
												aria-label={`Tolerance of ${label}`}
												type="number"
												step="0.1"
												min="0"
												placeholder="default"
												value={row.tolerance ?? ''}
												onChange={(event) =>
													update(row.id, {
														tolerance: event.currentTarget.value === '' ? null : Number(event.currentTarget.value),
													})
												}
												className={cn(cell, 'w-20 tabular-nums')}
												aria-invalid={rowProblems.some((problem) => problem.field === 'tolerance') || undefined}
											/>
										</td>
										<td className="px-1 py-1">
											<input
												aria-label={`Assignment of ${label}`}
												value={row.assignment}
												onChange={(event) => update(row.id, { assignment: event.currentTarget.value })}
												className={cn(cell, 'w-full min-w-56')}
											/>
											{rowProblems.map((problem) => (
												<p key={problem.message} className="text-danger mt-1 text-xs">
													{problem.message}
												</p>
											))}
										</td>
										<td className="px-1 py-1">
											<select
												aria-label={`Intensity of ${label}`}
												value={row.intensityClass}
												onChange={(event) =>
													update(row.id, { intensityClass: event.currentTarget.value as BandRow['intensityClass'] })
												}
												className={cell}
											>
												{Object.entries(INTENSITY_LABELS).map(([value, text]) => (
													<option key={value} value={value}>
														{text}
													</option>
												))}
											</select>
										</td>
										<td className="px-1 py-1">
											<select
												aria-label={`Shape of ${label}`}
												value={row.shape}
												onChange={(event) => update(row.id, { shape: event.currentTarget.value as BandRow['shape'] })}
												className={cell}
											>
												<option value="sharp">sharp</option>
												<option value="broad">broad</option>
											</select>
										</td>
										<td className="px-1 py-1 text-center">
											<input
												aria-label={`${label} is required`}
												type="checkbox"
												checked={row.required}
												onChange={(event) => update(row.id, { required: event.currentTarget.checked })}
												className="accent-accent mt-2"
											/>
										</td>
										{
											<td className="px-1 py-1 whitespace-nowrap">
												<Button
													size="sm"
													variant="quiet"
													onClick={() => move(index, -1)}
													disabled={index === 0}
													aria-label={`Move ${label} up`}
												>
													↑
												</Button>
												<Button
													size="sm"
													variant="quiet"
													onClick={() => move(index, 1)}
													disabled={index === rows.length - 1}
													aria-label={`Move ${label} down`}
												>
													↓
												</Button>
												<Button
													size="sm"
													variant="quiet"
													onClick={() => setRows((current) => current.filter((other) => other.id !== row.id))}
													aria-label={`Remove ${label}`}
												>
													Remove
												</Button>
											</td>
										}
									</tr>
								)
							})}
						</tbody>
					</table>
				</div>
			)}
			{
				<p className="text-ink-faint text-xs">
					An empty tolerance uses the default tolerance of the acceptance criteria, or 0.5 % of the position (Ph. Eur.
					2.2.24) when none is set.
				</p>
			}
		</section>
	)
}
