import { useState } from 'react'
import { SpectrumViewer } from '#app/components/spectrum-viewer.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { cn } from '#app/utils/misc.ts'
import type { TextPart, VersionDiff } from '#shared/specs/diff.ts'

const added = 'bg-good-soft text-good underline decoration-1'
const removed = 'bg-danger-soft text-danger line-through'

function InlineParts({ parts }: { parts: Array<TextPart> }) {
	return (
		<span className="whitespace-pre-wrap">
			{parts.map((part, index) =>
				part.added ? (
					<ins key={index} className={added}>
						{part.value}
					</ins>
				) : part.removed ? (
					<del key={index} className={removed}>
						{part.value}
					</del>
				) : (
					<span key={index}>{part.value}</span>
				),
			)}
		</span>
	)
}

const show = (value: unknown) => (value === null || value === undefined || value === '' ? '—' : String(value))

/** Tracked changes between two versions: inline redline or side by side, field by field and row by row. */
export function VersionDiffView({
	diff,
	references,
}: {
	diff: VersionDiff
	references: { older: string | null; newer: string | null }
}) {
	const [mode, setMode] = useState<'inline' | 'side'>('inline')
	const [overlay, setOverlay] = useState(false)
	const nothing =
		diff.fields.length === 0 &&
		!diff.referenceSpectrum &&
		diff.exclusionRegions.length === 0 &&
		diff.bands.changes.length === 0 &&
		!diff.bands.reordered
	return (
		<div className="space-y-6">
			<div role="group" aria-label="Layout" className="border-rule inline-flex overflow-hidden rounded-md border">
				<button
					type="button"
					onClick={() => setMode('inline')}
					aria-pressed={mode === 'inline'}
					className={cn('px-3 py-1.5 text-sm', mode === 'inline' ? 'bg-accent text-paper' : 'bg-sheet')}
				>
					Inline redline
				</button>
				<button
					type="button"
					onClick={() => setMode('side')}
					aria-pressed={mode === 'side'}
					className={cn('px-3 py-1.5 text-sm', mode === 'side' ? 'bg-accent text-paper' : 'bg-sheet')}
				>
					Side by side
				</button>
			</div>
			{nothing ? <p className="text-ink-soft">The two versions have the same content.</p> : null}
			{diff.fields.length ? (
				<section className="bg-sheet border-rule rounded-lg border">
					<h2 className="border-rule border-b px-4 py-3 text-base font-bold">Fields</h2>
					<table className="w-full text-sm">
						<thead className="sr-only">
							<tr>
								<th>Field</th>
								{mode === 'side' ? (
									<>
										<th>Version {diff.fromVersion}</th>
										<th>Version {diff.toVersion}</th>
									</>
								) : (
									<th>Change</th>
								)}
							</tr>
						</thead>
						<tbody>
							{diff.fields.map((change) => (
								<tr
									key={change.field}
									className="border-rule border-b align-top last:border-0"
									data-testid="diff-field"
								>
									<th scope="row" className="text-ink-soft w-56 px-4 py-2 text-left font-medium">
										{change.label}
									</th>
									{mode === 'side' ? (
										<>
											<td className="px-4 py-2 whitespace-pre-wrap">
												<span className={removed}>{show(change.old)}</span>
											</td>
											<td className="px-4 py-2 whitespace-pre-wrap">
												<span className={added}>{show(change.new)}</span>
											</td>
										</>
									) : (
										<td className="px-4 py-2">
											{change.kind === 'text' ? (
												<InlineParts parts={change.parts} />
											) : (
												<>
													<del className={removed}>{show(change.old)}</del> →{' '}
													<ins className={added}>{show(change.new)}</ins>
												</>
											)}
										</td>
									)}
								</tr>
							))}
						</tbody>
					</table>
				</section>
			) : null}
			{diff.exclusionRegions.length ? (
				<section className="bg-sheet border-rule rounded-lg border px-4 py-3 text-sm">
					<h2 className="mb-2 text-base font-bold">Exclusion regions</h2>
					<ul className="space-y-1">
						{diff.exclusionRegions.map((change, index) => (
							<li key={index}>
								{change.kind === 'relabelled' ? (
									<>
										{change.to}–{change.from} cm⁻¹ relabelled: <del className={removed}>{show(change.old)}</del> →{' '}
										<ins className={added}>{show(change.new)}</ins>
									</>
								) : change.kind === 'added' ? (
									<ins className={added}>
										Added {change.region.to}–{change.region.from} cm⁻¹ {change.region.label ?? ''}
									</ins>
								) : (
									<del className={removed}>
										Removed {change.region.to}–{change.region.from} cm⁻¹ {change.region.label ?? ''}
									</del>
								)}
							</li>
						))}
					</ul>
				</section>
			) : null}
			{diff.referenceSpectrum ? (
				<section className="bg-sheet border-rule rounded-lg border px-4 py-3 text-sm">
					<h2 className="mb-2 text-base font-bold">Reference spectrum</h2>
					<p>
						<span className="text-ink-soft">Version {diff.fromVersion}:</span>{' '}
						{diff.referenceSpectrum.old?.fileName ?? 'none'}{' '}
						<span className="font-mono text-xs break-all">{diff.referenceSpectrum.old?.sha256 ?? ''}</span>
					</p>
					<p>
						<span className="text-ink-soft">Version {diff.toVersion}:</span>{' '}
						{diff.referenceSpectrum.new?.fileName ?? 'none'}{' '}
						<span className="font-mono text-xs break-all">{diff.referenceSpectrum.new?.sha256 ?? ''}</span>
					</p>
					{diff.referenceSpectrum.sameBytes ? (
						<p className="text-ink-soft mt-1">Same bytes under another file name.</p>
					) : null}
					{references.older && references.newer ? (
						<div className="mt-2">
							<Button
								size="sm"
								variant="secondary"
								onClick={() => setOverlay((shown) => !shown)}
								aria-expanded={overlay}
							>
								{overlay ? 'Hide the overlay' : 'Overlay both references'}
							</Button>
							{overlay ? (
								<div className="mt-3">
									<SpectrumViewer
										sources={[
											{
												id: references.older,
												label: `Version ${diff.fromVersion}: ${diff.referenceSpectrum.old?.fileName ?? ''}`,
												url: `/spectra/${references.older}/data`,
											},
											{
												id: references.newer,
												label: `Version ${diff.toVersion}: ${diff.referenceSpectrum.new?.fileName ?? ''}`,
												url: `/spectra/${references.newer}/data`,
											},
										]}
									/>
								</div>
							) : null}
						</div>
					) : null}
				</section>
			) : null}
			{diff.bands.changes.length || diff.bands.reordered ? (
				<section className="bg-sheet border-rule rounded-lg border">
					<h2 className="border-rule border-b px-4 py-3 text-base font-bold">
						Band table{diff.bands.reordered ? ' (rows reordered)' : ''}
					</h2>
					<table className="w-full text-sm">
						<thead>
							<tr className="border-rule border-b text-left">
								<th scope="col" className="px-4 py-1.5 font-semibold">
									Row
								</th>
								<th scope="col" className="px-4 py-1.5 font-semibold">
									Position
								</th>
								<th scope="col" className="px-4 py-1.5 font-semibold">
									± cm⁻¹
								</th>
								<th scope="col" className="px-4 py-1.5 font-semibold">
									Assignment
								</th>
								<th scope="col" className="px-4 py-1.5 font-semibold">
									Intensity
								</th>
								<th scope="col" className="px-4 py-1.5 font-semibold">
									Shape
								</th>
								<th scope="col" className="px-4 py-1.5 font-semibold">
									Required
								</th>
							</tr>
						</thead>
						<tbody>
							{diff.bands.rows.map((row) => {
								if (row.kind === 'unchanged') {
									if (mode === 'inline' && !diff.bands.moved.includes(row.id)) return null
									return (
										<BandCells
											key={row.id}
											label={diff.bands.moved.includes(row.id) ? 'moved' : 'same'}
											row={row.row}
										/>
									)
								}
								if (row.kind === 'added')
									return <BandCells key={row.id} label="added" row={row.row} className={added} />
								if (row.kind === 'removed')
									return <BandCells key={row.id} label="removed" row={row.row} className={removed} />
								const changed = new Map(row.cells.map((cell) => [cell.column, cell]))
								const cell = (
									column: 'position' | 'tolerance' | 'assignment' | 'intensityClass' | 'shape' | 'required',
								) => {
									const change = changed.get(column)
									if (!change) return show(row.new[column])
									return (
										<>
											<del className={removed}>{show(change.old)}</del> <ins className={added}>{show(change.new)}</ins>
										</>
									)
								}
								return (
									<tr key={row.id} className="border-rule border-b last:border-0" data-testid="diff-band">
										<td className="text-ink-soft px-4 py-1.5">changed</td>
										<td className="px-4 py-1.5 tabular-nums">{cell('position')}</td>
										<td className="px-4 py-1.5 tabular-nums">{cell('tolerance')}</td>
										<td className="px-4 py-1.5">{cell('assignment')}</td>
										<td className="px-4 py-1.5">{cell('intensityClass')}</td>
										<td className="px-4 py-1.5">{cell('shape')}</td>
										<td className="px-4 py-1.5">{cell('required')}</td>
									</tr>
								)
							})}
						</tbody>
					</table>
				</section>
			) : null}
		</div>
	)
}

function BandCells({
	label,
	row,
	className,
}: {
	label: string
	row: {
		position: number
		tolerance: number | null
		assignment: string
		intensityClass: string
		shape: string
		required: boolean
	}
	className?: string
}) {
	return (
		<tr className="border-rule border-b last:border-0" data-testid="diff-band">
			<td className="text-ink-soft px-4 py-1.5">{label}</td>
			<td className="px-4 py-1.5 tabular-nums">
				<span className={className}>{row.position}</span>
			</td>
			<td className="px-4 py-1.5 tabular-nums">
				<span className={className}>{show(row.tolerance)}</span>
			</td>
			<td className="px-4 py-1.5">
				<span className={className}>{row.assignment || '—'}</span>
			</td>
			<td className="px-4 py-1.5">
				<span className={className}>{row.intensityClass}</span>
			</td>
			<td className="px-4 py-1.5">
				<span className={className}>{row.shape}</span>
			</td>
			<td className="px-4 py-1.5">
				<span className={className}>{row.required ? 'yes' : 'no'}</span>
			</td>
		</tr>
	)
}
