import { data, Link } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/container'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getRun } from '#app/.server/queries/runs.ts'
import { ComparisonDetail, type ComparisonResult } from '#app/components/evidence-list.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { VerdictBadge } from '#app/components/run-badges.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'

const ParamsSchema = z.object({ runId: z.uuid(), containerNumber: z.coerce.number().int().min(1).max(10_000) })

export async function loader({ context, params }: Route.LoaderArgs) {
	authorize(context, 'run:read')
	const parsed = ParamsSchema.safeParse(params)
	const found = parsed.success
		? await getRun(db, parsed.data.runId, { containerNumber: parsed.data.containerNumber })
		: null
	const container = found?.containers[0]
	if (!found || !container)
		throw data({ message: 'This container does not exist, or its address is wrong.' }, { status: 404 })
	return {
		run: {
			id: found.run.id,
			runNumber: found.run.runNumber,
			documentNumber: found.run.documentNumber,
			versionNumber: found.run.versionNumber,
		},
		lot: found.lot,
		container,
		referenceSpectrumId: found.referenceSpectrumId,
		threshold: found.criteria.minCorrelation,
		exclusionRegions: found.criteria.exclusionRegions.map((region) => ({
			from: region.from,
			to: region.to,
			label: region.label ?? undefined,
		})),
		containerCount: found.lot.containerCount,
	}
}

export default function ContainerEvidence({ loaderData }: Route.ComponentProps) {
	const { run, lot, container, referenceSpectrumId, threshold, exclusionRegions, containerCount } = loaderData
	const result = container.result as unknown as ComparisonResult
	const bandMarkers = result.bands.map((band) => ({
		position: band.expected.position,
		tolerance: band.expected.tolerance,
		label: band.expected.assignment || `${band.expected.position}`,
	}))
	return (
		<>
			<PageHeader
				title={`Container ${container.containerNumber} of ${containerCount}`}
				description={`${run.runNumber}, lot ${lot.lotNumber}: ${container.fileName} against the reference of ${run.documentNumber} v${run.versionNumber} (correlation threshold ${threshold}).`}
				actions={
					<>
						{container.containerNumber > 1 ? (
							<Link
								to={`/runs/${run.id}/containers/${container.containerNumber - 1}`}
								className={buttonVariants({ variant: 'secondary' })}
							>
								Previous
							</Link>
						) : null}
						{container.containerNumber < containerCount ? (
							<Link
								to={`/runs/${run.id}/containers/${container.containerNumber + 1}`}
								className={buttonVariants({ variant: 'secondary' })}
							>
								Next
							</Link>
						) : null}
						<Link to={`/runs/${run.id}`} className={buttonVariants({ variant: 'secondary' })}>
							Back to the run
						</Link>
					</>
				}
			/>
			<div className="mb-3 flex items-center gap-3">
				<VerdictBadge verdict={container.verdict} />
				<span className="text-ink-soft text-sm">
					Sample SHA-256 <span className="font-mono text-xs">{container.sampleSha256}</span> · algorithm{' '}
					{container.algorithmVersion}
				</span>
			</div>
			<div className="bg-sheet border-rule rounded-lg border p-4">
				<ComparisonDetail
					result={result}
					sample={container.spectrumId}
					referenceId={referenceSpectrumId}
					referenceName={run.documentNumber}
					bands={bandMarkers}
					exclusionRegions={exclusionRegions}
					title={`Container ${container.containerNumber} against the reference`}
					overlayOpen
				/>
			</div>
		</>
	)
}

export function meta({ data: loaded }: Route.MetaArgs) {
	return [
		{ title: `Container ${loaded?.container.containerNumber ?? ''} · ${loaded?.run.runNumber ?? ''} · Bandproof` },
	]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
