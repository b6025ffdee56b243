import { BandTableView } from '#app/components/band-table-editor.tsx'
import type { SpecVersionContent } from '#shared/specs/version-content.ts'
import { formatRegions } from '#shared/specs/version-form.ts'

/** A version's content as read-only text: what reviewers, approvers and inspectors read. */
export function ContentView({
	content,
	referenceName,
	changeReason,
}: {
	content: SpecVersionContent
	referenceName: string | null
	changeReason: string | null
}) {
	const rows: Array<[string, string]> = [
		['Reason for this version', changeReason ?? 'First version'],
		['Scope', content.scope || '—'],
		['Technique', content.method.technique],
		['Range', `${content.method.rangeTo}–${content.method.rangeFrom} cm⁻¹`],
		['Resolution and scans', `${content.method.resolution} cm⁻¹, ${content.method.scans} scans`],
		['Sample preparation', content.method.samplePreparation || '—'],
		['Reference spectrum', referenceName ?? 'None'],
		['Minimum correlation', String(content.criteria.minCorrelation)],
		[
			'Minimum derivative correlation',
			content.criteria.minDerivativeCorrelation === null
				? 'Not used'
				: String(content.criteria.minDerivativeCorrelation),
		],
		[
			'Default band tolerance',
			content.criteria.defaultBandTolerance === null
				? '0.5 % of each position'
				: `± ${content.criteria.defaultBandTolerance} cm⁻¹`,
		],
		['Exclusion regions', formatRegions(content.criteria.exclusionRegions) || 'None'],
		['Justification of the thresholds', content.criteria.thresholdJustification || '—'],
		['Notes', content.notes || '—'],
	]
	return (
		<div className="space-y-6">
			<section className="bg-sheet border-rule rounded-lg border p-5">
				<h2 className="mb-3 text-lg font-bold">Content</h2>
				<dl className="grid grid-cols-[14rem_1fr] gap-x-4 gap-y-2 text-sm">
					{rows.map(([label, value]) => (
						<div key={label} className="contents">
							<dt className="text-ink-faint">{label}</dt>
							<dd className="whitespace-pre-line">{value}</dd>
						</div>
					))}
				</dl>
			</section>
			<section className="bg-sheet border-rule rounded-lg border p-5">
				<BandTableView rows={content.bands} />
			</section>
		</div>
	)
}
