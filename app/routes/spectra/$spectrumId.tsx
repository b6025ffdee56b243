import { data, Link } from 'react-router'
import type { Route } from './+types/$spectrumId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getSpectrumRecord } from '#app/.server/queries/spectra.ts'
import { loadSpectrum } from '#app/.server/services/spectra.ts'
import { analyseSpectrum } from '#app/.server/services/spectrum-analysis.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { SpectrumViewer } from '#app/components/spectrum-viewer.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'

export async function loader({ context, params }: Route.LoaderArgs) {
	authorize(context, 'spectrum:read')
	const record = await getSpectrumRecord(db, params.spectrumId)
	if (!record) throw data({ message: 'This spectrum does not exist, or its address is wrong.' }, { status: 404 })
	const stored = await loadSpectrum(db, record.id)
	const analysis = stored ? analyseSpectrum(stored.spectrum) : null
	return { record, analysis }
}

const CONFIDENCE_TONE = { high: 'good', medium: 'caution', low: 'neutral' } as const

export default function SpectrumPage({ loaderData }: Route.ComponentProps) {
	const { record, analysis } = loaderData
	const facts: Array<[string, string]> = [
		['Material', record.materialCode ? `${record.materialCode} · ${record.materialName}` : 'Not linked'],
		['Purpose', record.purpose.replace('-', ' ')],
		[
			'Points',
			`${record.points.toLocaleString('en')} from ${Math.round(record.maxWavenumber)} to ${Math.round(record.minWavenumber)} cm⁻¹`,
		],
		[
			'As stored in the file',
			`${record.format}; x in ${record.xUnits}, y as ${record.yUnits} (${record.ordinate.replace(/-/g, ' ')})`,
		],
		['Technique', record.technique ?? '—'],
		['Instrument', record.instrument ?? '—'],
		['Resolution', record.resolution ? `${record.resolution} cm⁻¹` : '—'],
		['Acquired on', record.acquiredOn ?? '—'],
		[
			'Reference standard',
			[record.referenceStandardName, record.referenceStandardLot && `lot ${record.referenceStandardLot}`]
				.filter(Boolean)
				.join(', ') || '—',
		],
		['Uploaded', `${formatUtc(record.uploadedAt)} by ${record.uploaderName}`],
		['SHA-256 of the original file', record.sha256],
	]
	return (
		<>
			<PageHeader
				title={record.fileName}
				description={
					record.title && record.title !== record.fileName
						? record.title
						: 'Absorbance on a wavenumber axis, converted from the original file.'
				}
				actions={
					<>
						{record.lockedAt ? (
							<StatusBadge tone="neutral">Locked since {formatUtc(record.lockedAt)}</StatusBadge>
						) : null}
						<a href={`/spectra/${record.id}/original`} className={buttonVariants({ variant: 'secondary' })} download>
							Download the original
						</a>
					</>
				}
			/>
			<SpectrumViewer
				sources={[{ id: record.id, label: record.fileName, url: `/spectra/${record.id}/data` }]}
				peaks={analysis?.peaks
					.filter((peak) => peak.relative >= 0.15)
					.map((peak) => ({ position: peak.position, label: String(Math.round(peak.position)) }))}
				exclusionRegions={[{ from: 2280, to: 2400, label: 'CO₂' }]}
			/>
			<div className="mt-6 grid gap-6 xl:grid-cols-2">
				<section className="bg-sheet border-rule rounded-lg border p-5">
					<h2 className="mb-3 text-lg font-bold">Record</h2>
					<dl className="grid grid-cols-[11rem_1fr] gap-x-4 gap-y-1.5 text-sm">
						{facts.map(([label, value]) => (
							<div key={label} className="contents">
								<dt className="text-ink-faint">{label}</dt>
								<dd className="break-all">{value}</dd>
							</div>
						))}
					</dl>
					{record.notes ? <p className="text-ink-soft mt-3 text-sm whitespace-pre-line">{record.notes}</p> : null}
					{record.warnings.length ? (
						<div className="border-caution bg-caution-soft mt-4 rounded-md border-l-4 px-4 py-3 text-sm">
							<p className="font-semibold">Notes from the import</p>
							<ul className="mt-1 list-disc pl-5">
								{record.warnings.map((warning, index) => (
									<li key={index}>
										{warning.line ? `line ${warning.line}: ` : ''}
										{warning.message}
									</li>
								))}
							</ul>
						</div>
					) : null}
				</section>
				{analysis ? (
					<section className="bg-sheet border-rule rounded-lg border p-5">
						<h2 className="mb-1 text-lg font-bold">Functional-group suggestions</h2>
						<p className="text-ink-faint mb-3 text-xs">{analysis.caveat}</p>
						{analysis.groups.length === 0 ? (
							<p className="text-ink-soft text-sm">No group is suggested for this spectrum.</p>
						) : (
							<ul className="space-y-2">
								{analysis.groups.map((group) => (
									<li key={group.id} className="border-rule rounded-md border p-3 text-sm">
										<div className="flex items-center justify-between gap-2">
											<span className="font-semibold">{group.name}</span>
											<StatusBadge tone={CONFIDENCE_TONE[group.confidence]}>{group.confidence} confidence</StatusBadge>
										</div>
										<p className="text-ink-soft mt-1">
											{group.evidence.map((item) => `${item.role} at ${item.position} cm⁻¹`).join('; ')}
										</p>
										{group.note ? <p className="text-ink-faint mt-1 text-xs">{group.note}</p> : null}
									</li>
								))}
							</ul>
						)}
					</section>
				) : null}
			</div>
			{analysis ? (
				<section className="bg-sheet border-rule mt-6 rounded-lg border p-5">
					<h2 className="mb-3 text-lg font-bold">Peaks</h2>
					<div className="max-h-96 overflow-auto">
						<table className="w-full text-sm">
							<thead className="bg-sheet sticky top-0">
								<tr className="border-rule border-b">
									<th scope="col" className="px-2 py-1.5 text-right font-semibold">
										Position (cm⁻¹)
									</th>
									<th scope="col" className="px-2 py-1.5 text-right font-semibold">
										Absorbance
									</th>
									<th scope="col" className="px-2 py-1.5 text-right font-semibold">
										Relative
									</th>
									<th scope="col" className="px-2 py-1.5 text-right font-semibold">
										Width (cm⁻¹)
									</th>
									<th scope="col" className="px-2 py-1.5 text-left font-semibold">
										Shape
									</th>
								</tr>
							</thead>
							<tbody>
								{analysis.peaks.map((peak) => (
									<tr key={peak.position} className="border-rule border-b last:border-0">
										<td className="px-2 py-1 text-right tabular-nums">{peak.position.toFixed(1)}</td>
										<td className="px-2 py-1 text-right tabular-nums">{peak.intensity.toFixed(3)}</td>
										<td className="px-2 py-1 text-right tabular-nums">{(peak.relative * 100).toFixed(0)} %</td>
										<td className="px-2 py-1 text-right tabular-nums">{peak.width}</td>
										<td className="px-2 py-1">{peak.shape}</td>
									</tr>
								))}
							</tbody>
						</table>
					</div>
				</section>
			) : null}
			<p className="mt-6 text-sm">
				<Link to="/spectra" className="text-accent underline underline-offset-4">
					Back to the library
				</Link>
			</p>
		</>
	)
}

export function meta({ loaderData }: Route.MetaArgs) {
	return [{ title: `${loaderData?.record.fileName ?? 'Spectrum'} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
