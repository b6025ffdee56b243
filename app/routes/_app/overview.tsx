import { count } from 'drizzle-orm'
import { Link } from 'react-router'
import type { Route } from './+types/overview'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { CautionNote } from '#app/components/caution-note.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { can, ROLE_DUTIES } from '#shared/authz/permissions.ts'

export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'workspace:enter')
	const materialCount = can(actor, 'material:read')
		? ((await db.select({ n: count() }).from(materials))[0]?.n ?? 0)
		: null
	return { actor, materialCount }
}

export default function Overview({ loaderData }: Route.ComponentProps) {
	const { actor, materialCount } = loaderData
	return (
		<>
			<PageHeader title={`Welcome, ${actor.name}`} description="What your roles let you do in Bandproof." />
			<div className="grid max-w-5xl gap-4 md:grid-cols-2">
				{actor.roles.map((role) => (
					<section key={role} className="bg-sheet border-rule rounded-lg border p-5">
						<h2 className="text-base font-bold capitalize">{role}</h2>
						<p className="text-ink-soft mt-1 text-sm">{ROLE_DUTIES[role]}</p>
					</section>
				))}
				{materialCount !== null ? (
					<section className="bg-sheet border-rule rounded-lg border p-5">
						<h2 className="text-base font-bold">Materials</h2>
						<p className="text-ink-soft mt-1 text-sm">
							{materialCount} {materialCount === 1 ? 'material is' : 'materials are'} registered.{' '}
							<Link to="/materials" className="text-accent underline underline-offset-4">
								Open the list
							</Link>
						</p>
					</section>
				) : null}
			</div>
			<CautionNote className="mt-8 max-w-5xl" />
		</>
	)
}

export function meta() {
	return [{ title: 'Overview · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
