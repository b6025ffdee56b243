import { data, Form, Link } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/compare'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getVersionWorkspace } from '#app/.server/queries/specifications.ts'
import { getVersionDiff } from '#app/.server/queries/version-diff.ts'
import { inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { VersionDiffView } from '#app/components/version-diff-view.tsx'
import { VERSION_STATE_LABELS } from '#shared/specs/state-labels.ts'

const CompareQuerySchema = z.object({
	from: z.string().uuid().optional().catch(undefined),
	to: z.string().uuid().optional().catch(undefined),
})

export async function loader({ context, params, request }: Route.LoaderArgs) {
	authorize(context, 'spec:read')
	const query = CompareQuerySchema.parse(Object.fromEntries(new URL(request.url).searchParams))
	const versions = await db.query.specVersions.findMany({
		where: (table, { eq }) => eq(table.specificationId, params.specId),
		orderBy: (table, { desc }) => desc(table.versionNumber),
		columns: { id: true, versionNumber: true, state: true },
	})
	if (versions.length === 0) throw data({ message: 'There is no specification at this address.' }, { status: 404 })
	const to = query.to ?? versions[0]!.id
	const from = query.from ?? versions[1]?.id ?? versions[0]!.id
	const [result, workspace] = await Promise.all([
		getVersionDiff(db, params.specId, from, to),
		getVersionWorkspace(db, params.specId, to),
	])
	if (!result || !workspace)
		throw data({ message: 'One of the versions to compare does not belong to this specification.' }, { status: 404 })
	return { ...result, versions, from, to, specification: workspace.specification }
}

export default function CompareVersions({ loaderData }: Route.ComponentProps) {
	const { diff, summary, older, newer, versions, from, to, specification } = loaderData
	return (
		<>
			<PageHeader
				title={`Changes in ${specification.documentNumber}`}
				description={`Version ${older.versionNumber} (${VERSION_STATE_LABELS[older.state]}) against version ${newer.versionNumber} (${VERSION_STATE_LABELS[newer.state]})${newer.changeReason ? ` — reason: ${newer.changeReason}` : ''}`}
				actions={
					<Link
						to={`/specifications/${specification.id}/versions/${to}`}
						className={buttonVariants({ variant: 'secondary' })}
					>
						Open version {newer.versionNumber}
					</Link>
				}
			/>
			<Form method="get" className="mb-6 flex flex-wrap items-end gap-3">
				<div>
					<label htmlFor="compare-from" className="mb-1 block text-sm font-medium">
						From
					</label>
					<select id="compare-from" name="from" defaultValue={from} className={`${inputClass} w-52`}>
						{versions.map((version) => (
							<option key={version.id} value={version.id}>
								Version {version.versionNumber} ({VERSION_STATE_LABELS[version.state]})
							</option>
						))}
					</select>
				</div>
				<div>
					<label htmlFor="compare-to" className="mb-1 block text-sm font-medium">
						To
					</label>
					<select id="compare-to" name="to" defaultValue={to} className={`${inputClass} w-52`}>
						{versions.map((version) => (
							<option key={version.id} value={version.id}>
								Version {version.versionNumber} ({VERSION_STATE_LABELS[version.state]})
							</option>
						))}
					</select>
				</div>
				<button type="submit" className={buttonVariants({ variant: 'secondary' })}>
					Compare
				</button>
			</Form>
			{summary.length ? (
				<section className="bg-sheet border-rule mb-6 rounded-lg border px-4 py-3 text-sm">
					<h2 className="mb-1 text-base font-bold">Summary of changes</h2>
					<ul className="list-disc pl-5">
						{summary.map((line) => (
							<li key={line}>{line}</li>
						))}
					</ul>
				</section>
			) : null}
			<VersionDiffView diff={diff} references={{ older: older.referenceId, newer: newer.referenceId }} />
		</>
	)
}

export function meta({ loaderData }: Route.MetaArgs) {
	return [{ title: `Changes · ${loaderData?.specification.documentNumber ?? ''} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
