import { useState } from 'react'
import { Form } from 'react-router'
import { SpectrumViewer } from '#app/components/spectrum-viewer.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'

type Region = { from: number; to: number; label?: string }
type Item = {
	id: string
	kind: 'comparison' | 'specificity'
	title: string
	verdict: string | null
	correlation: number | null
	result: unknown
	sampleSpectrumId: string | null
	createdAt: string
	createdByName: string
}

export type ComparisonResult = {
	verdict: string
	reasons: Array<string>
	correlation: number | null
	derivativeCorrelation: number | null
	distance: number | null
	flags: Array<{ code: string; message: string; spectrum: string; makesInconclusive: boolean }>
	bands: Array<{
		expected: { position: number; tolerance: number; assignment: string; required: boolean }
		observed: number | null
		shift: number | null
		withinTolerance: boolean
		relativeIntensity: { sample: number | null; reference: number | null }
	}>
	extraBands: Array<{ position: number; relativeIntensity: number }>
	grid: { comparedPoints: number }
}

type SpecificityResult = {
	nearest: { fileName: string; materialName: string; correlation: number } | null
	threshold: number
	margin: number | null
	specific: boolean
	comparedWith: number
	replicates: Array<number>
	suggestion: {
		threshold: number
		lowestReplicate: number
		nearestNonTarget: number
		rule?: 'midpoint' | 'guidance-floor'
	} | null
	thinMargin: boolean
}

const VERDICT_LABEL: Record<string, { text: string; tone: 'good' | 'danger' | 'caution' | 'neutral' }> = {
	conforms: { text: 'Conforms', tone: 'good' },
	'does-not-conform': { text: 'Does not conform', tone: 'danger' },
	inconclusive: { text: 'Inconclusive', tone: 'caution' },
	specific: { text: 'Specific', tone: 'good' },
	'not-specific': { text: 'Not specific', tone: 'danger' },
}

/** A band shift in cm⁻¹ with its sign; a shift that rounds to zero is shown without one. */
const formatShift = (shift: number | null) =>
	shift === null ? '—' : Math.abs(shift) < 0.05 ? '0.0' : `${shift > 0 ? '+' : '−'}${Math.abs(shift).toFixed(1)}`

const fixed = (value: number | null | undefined, digits = 4) =>
	value === null || value === undefined ? '—' : value.toFixed(digits)

/** The evidence records of a version, with every number behind each verdict. */
export function EvidenceList({
	items,
	referenceId,
	referenceName,
	bands,
	exclusionRegions,
	canAcceptThreshold = false,
}: {
	items: Array<Item>
	referenceId: string | null
	referenceName: string | null
	bands: Array<{ position: number; tolerance?: number; label: string }>
	exclusionRegions: Array<Region>
	canAcceptThreshold?: boolean
}) {
	if (items.length === 0) return <p className="text-ink-soft text-sm">No evidence recorded yet.</p>
	return (
		<ul className="space-y-3">
			{items.map((item) => {
				const verdict = VERDICT_LABEL[item.verdict ?? ''] ?? { text: item.verdict ?? '—', tone: 'neutral' as const }
				return (
					<li key={item.id} className="bg-sheet border-rule rounded-lg border p-4" data-testid="evidence-item">
						<div className="flex flex-wrap items-center gap-3">
							<StatusBadge tone={verdict.tone}>{verdict.text}</StatusBadge>
							<h3 className="text-base font-semibold">{item.title}</h3>
							<span className="text-ink-faint ml-auto text-xs">
								{formatUtc(item.createdAt)} · {item.createdByName}
							</span>
						</div>
						{item.kind === 'comparison' ? (
							<ComparisonDetail
								result={item.result as ComparisonResult}
								sample={item.sampleSpectrumId}
								referenceId={referenceId}
								referenceName={referenceName}
								bands={bands}
								exclusionRegions={exclusionRegions}
								title={item.title}
							/>
						) : (
							<SpecificityDetail
								result={item.result as SpecificityResult}
								evidenceId={item.id}
								canAccept={canAcceptThreshold}
							/>
						)}
					</li>
				)
			})}
		</ul>
	)
}

export function ComparisonDetail({
	result,
	sample,
	referenceId,
	referenceName,
	bands,
	exclusionRegions,
	title,
	overlayOpen = false,
}: {
	result: ComparisonResult
	sample: string | null
	referenceId: string | null
	referenceName: string | null
	bands: Array<{ position: number; tolerance?: number; label: string }>
	exclusionRegions: Array<Region>
	title: string
	/** Show the overlay at once (a page about one comparison) instead of on request (a list of them). */
	overlayOpen?: boolean
}) {
	const [overlay, setOverlay] = useState(overlayOpen)
	return (
		<div className="mt-3 space-y-3 text-sm">
			<dl className="grid grid-cols-2 gap-x-6 gap-y-1 sm:grid-cols-4">
				<dt className="text-ink-faint">Correlation</dt>
				<dd className="tabular-nums" data-testid="correlation">
					{fixed(result.correlation)}
				</dd>
				<dt className="text-ink-faint">Derivative correlation</dt>
				<dd className="tabular-nums">{fixed(result.derivativeCorrelation)}</dd>
				<dt className="text-ink-faint">Distance</dt>
				<dd className="tabular-nums">{fixed(result.distance)}</dd>
				<dt className="text-ink-faint">Points compared</dt>
				<dd className="tabular-nums">{result.grid.comparedPoints}</dd>
			</dl>
			{result.reasons.length ? (
				<ul className="text-ink list-disc pl-5">
					{result.reasons.map((reason) => (
						<li key={reason}>{reason}</li>
					))}
				</ul>
			) : null}
			{result.flags.length ? (
				<p className="text-caution">
					Quality flags: {result.flags.map((flag) => `${flag.spectrum}: ${flag.message}`).join('; ')}
				</p>
			) : null}
			{result.bands.length ? (
				<table className="w-full max-w-3xl text-sm">
					<thead>
						<tr className="border-rule border-b text-left">
							<th scope="col" className="py-1 pr-4 font-semibold">
								Expected (cm⁻¹)
							</th>
							<th scope="col" className="py-1 pr-4 font-semibold">
								Observed
							</th>
							<th scope="col" className="py-1 pr-4 font-semibold">
								Shift
							</th>
							<th scope="col" className="py-1 pr-4 font-semibold">
								Tolerance
							</th>
							<th scope="col" className="py-1 pr-4 font-semibold">
								Relative intensity (sample / reference)
							</th>
							<th scope="col" className="py-1 pr-4 font-semibold">
								Result
							</th>
						</tr>
					</thead>
					<tbody>
						{result.bands.map((band) => (
							<tr key={band.expected.position} className="border-rule border-b last:border-0">
								<td className="py-1 pr-4 tabular-nums">
									{band.expected.position}
									{band.expected.required ? '' : ' (optional)'}
									{band.expected.assignment ? (
										<span className="text-ink-faint block text-xs">{band.expected.assignment}</span>
									) : null}
								</td>
								<td className="py-1 pr-4 tabular-nums">
									{band.observed === null ? 'not found' : band.observed.toFixed(1)}
								</td>
								<td className="py-1 pr-4 tabular-nums">{formatShift(band.shift)}</td>
								<td className="py-1 pr-4 tabular-nums">± {band.expected.tolerance.toFixed(1)}</td>
								<td className="py-1 pr-4 tabular-nums">
									{fixed(band.relativeIntensity.sample, 2)} / {fixed(band.relativeIntensity.reference, 2)}
								</td>
								<td className="py-1">
									{band.withinTolerance ? 'within' : <span className="text-danger font-medium">outside</span>}
								</td>
							</tr>
						))}
					</tbody>
				</table>
			) : null}
			{result.extraBands.length ? (
				<p className="text-ink-soft">
					Strong sample bands the reference lacks:{' '}
					{result.extraBands.map((band) => `${Math.round(band.position)} cm⁻¹`).join(', ')}
				</p>
			) : null}
			{referenceId && sample ? (
				<div>
					<Button size="sm" variant="secondary" onClick={() => setOverlay((shown) => !shown)} aria-expanded={overlay}>
						{overlay ? 'Hide the overlay' : 'Show the overlay'}
					</Button>
					{overlay ? (
						<div className="mt-3">
							<SpectrumViewer
								sources={[
									{
										id: referenceId,
										label: `Reference: ${referenceName ?? 'reference'}`,
										url: `/spectra/${referenceId}/data`,
									},
									{ id: sample, label: `Sample: ${title.split(' against ')[0]}`, url: `/spectra/${sample}/data` },
								]}
								bands={bands}
								exclusionRegions={exclusionRegions}
							/>
						</div>
					) : null}
				</div>
			) : null}
		</div>
	)
}

function SpecificityDetail({
	result,
	evidenceId,
	canAccept,
}: {
	result: SpecificityResult
	evidenceId: string
	canAccept: boolean
}) {
	return (
		<div className="mt-3 space-y-2 text-sm">
			{result.nearest ? (
				<p>
					Nearest other material: <span className="font-medium">{result.nearest.materialName}</span> (
					{result.nearest.fileName}), correlation{' '}
					<span className="tabular-nums">{result.nearest.correlation.toFixed(4)}</span> against the threshold{' '}
					{result.threshold}: margin <span className="font-medium tabular-nums">{fixed(result.margin)}</span>, from{' '}
					{result.comparedWith} other reference spectra.
				</p>
			) : (
				<p>
					The library holds no reference spectrum of another material yet, so specificity cannot be shown. Upload
					references of the close relatives of this material.
				</p>
			)}
			{result.thinMargin ? (
				<p className="border-caution bg-caution-soft rounded-md border-l-4 px-3 py-2">
					The margin is thin: a sample of the nearest material could pass a correlation-only test. Rely on the band
					table and consider a higher threshold or a derivative criterion.
				</p>
			) : null}
			{result.replicates.length ? (
				<p className="text-ink-soft">
					Replicate references of this material correlate at{' '}
					{result.replicates.map((value) => value.toFixed(4)).join(', ')}.
				</p>
			) : null}
			{result.suggestion ? (
				<div className="border-accent bg-accent-soft flex flex-wrap items-center gap-3 rounded-md border px-3 py-2">
					<p className="flex-1">
						Suggested minimum correlation:{' '}
						<span className="font-semibold tabular-nums">{result.suggestion.threshold}</span>, between the lowest
						replicate ({result.suggestion.lowestReplicate.toFixed(4)}) and the nearest other material (
						{result.suggestion.nearestNonTarget.toFixed(4)})
						{result.suggestion.rule === 'guidance-floor'
							? ': their midpoint lies below 0.95, the lowest threshold regulatory guidance accepts without justification, so 0.95 is suggested.'
							: ', at their midpoint.'}
					</p>
					{canAccept ? (
						<Form method="post">
							<input type="hidden" name="evidenceId" value={evidenceId} />
							<Button type="submit" size="sm" name="intent" value="accept-threshold">
								Use this threshold
							</Button>
						</Form>
					) : null}
				</div>
			) : result.nearest ? (
				<p className="text-ink-faint">
					Upload replicate measurements of the reference material to get a threshold suggested from data.
				</p>
			) : null}
		</div>
	)
}
