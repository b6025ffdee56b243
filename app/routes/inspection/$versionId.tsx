import { and, desc, eq, or } from 'drizzle-orm'
import { data, Link } from 'react-router'
import type { Route } from './+types/$versionId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { getVersionWorkspace } from '#app/.server/queries/specifications.ts'
import { getWorkflowView } from '#app/.server/queries/workflow.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { inspectorAccess, recordInspectionView } from '#app/.server/services/grants.ts'
import { CautionNote } from '#app/components/caution-note.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { ContentView } from '#app/components/version-content-view.tsx'
import { VersionStateBadge } from '#app/components/version-state-badge.tsx'
import { SignatureManifest } from '#app/components/workflow-panel.tsx'
import { formatUtc } from '#app/utils/misc.ts'

export async function loader({ context, params, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'inspection:read')
	const now = new Date()
	const access = await inspectorAccess(db, actor.id, params.versionId, now)
	if (!access)
		throw data({ message: 'Your access grant does not cover this version, or it has ended.' }, { status: 403 })
	const workspace = await getVersionWorkspace(db, access.specificationId, params.versionId)
	const workflow = await getWorkflowView(db, params.versionId, actor, now)
	if (!workspace || !workflow) throw data({ message: 'No such version.' }, { status: 404 })
	const audit = await db
		.select()
		.from(auditEvents)
		.where(
			or(
				eq(auditEvents.entityId, params.versionId),
				and(eq(auditEvents.entityType, 'specification'), eq(auditEvents.entityId, access.specificationId)),
			),
		)
		.orderBy(desc(auditEvents.id))
		.limit(100)
	// Every view by an inspector is on record (PRODUCT.md §7).
	await recordInspectionView(db, {
		actor,
		versionId: params.versionId,
		via: 'page',
		purpose: access.purpose,
		ipAddress: clientAddress(request),
		now,
	})
	return {
		specification: workspace.specification,
		version: workspace.version,
		content: workspace.content,
		referenceName: workspace.reference?.fileName ?? null,
		signatures: workflow.signatures,
		verified: new URL(request.url).searchParams.get('verify') === '1',
		access: { purpose: access.purpose, endsAt: access.endsAt.toISOString() },
		audit: audit.map((event) => ({
			id: event.id,
			at: event.occurredAt.toISOString(),
			actor: event.actorLabel,
			action: event.action,
			reason: event.reason,
		})),
	}
}

export default function InspectVersion({ loaderData }: Route.ComponentProps) {
	const { specification, version, content, referenceName, signatures, verified, access, audit } = loaderData
	return (
		<>
			<header className="border-rule mb-6 border-b pb-4">
				<p className="text-ink-faint text-sm">
					<Link to="/inspection" className="hover:text-accent underline-offset-4 hover:underline">
						Inspection
					</Link>{' '}
					/ {specification.documentNumber}
				</p>
				<div className="mt-1 flex flex-wrap items-center gap-3">
					<h1 className="text-2xl font-bold">{specification.title}</h1>
					<VersionStateBadge state={version.state} />
				</div>
				<p className="text-ink-soft mt-1 text-sm">
					{specification.documentNumber} · version {version.versionNumber} · {specification.material.code}{' '}
					{specification.material.name} · read-only for {access.purpose}, until {formatUtc(access.endsAt)}
				</p>
			</header>
			<section aria-labelledby="copies-heading" className="bg-sheet border-rule mb-6 rounded-lg border p-5">
				<h2 id="copies-heading" className="text-lg font-bold">
					Dossier
				</h2>
				<p className="text-ink-soft mb-3 text-sm">
					Your copies carry an "issued to … for inspection" line. Every download is recorded.
				</p>
				<div className="flex gap-2">
					<a href={`/inspection/${version.id}/dossier/pdf`} className={buttonVariants()} download>
						Download PDF
					</a>
					<a
						href={`/inspection/${version.id}/dossier/docx`}
						className={buttonVariants({ variant: 'secondary' })}
						download
					>
						Download DOCX
					</a>
				</div>
			</section>
			<div className="mb-6">
				<SignatureManifest signatures={signatures} verified={verified} />
			</div>
			<ContentView content={content} referenceName={referenceName} changeReason={version.changeReason} />
			<section aria-labelledby="audit-heading" className="mt-6">
				<h2 id="audit-heading" className="mb-2 text-lg font-bold">
					Audit extract
				</h2>
				<ListTable headers={['When', 'Who', 'What', 'Reason']}>
					{audit.map((event) => (
						<tr key={event.id} className="border-rule border-b last:border-0">
							<td className="text-ink-soft px-3 py-1.5 whitespace-nowrap tabular-nums">{formatUtc(event.at)}</td>
							<td className="px-3 py-1.5">{event.actor}</td>
							<td className="px-3 py-1.5 font-mono text-xs">{event.action}</td>
							<td className="text-ink-soft px-3 py-1.5">{event.reason ?? ''}</td>
						</tr>
					))}
				</ListTable>
			</section>
			<CautionNote className="mt-8" />
		</>
	)
}

export function meta({ loaderData }: Route.MetaArgs) {
	return [{ title: `${loaderData?.specification.documentNumber ?? 'Inspection'} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
