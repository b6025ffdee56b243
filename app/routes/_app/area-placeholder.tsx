import { data } from 'react-router'
import type { Route } from './+types/area-placeholder'
import { authorize } from '#app/.server/context.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import type { Permission } from '#shared/authz/permissions.ts'

// Areas of the product that are planned but not built yet. Each still checks its own permission, so the
// access rules are in force (and tested) before the area itself arrives.
const AREAS: Record<string, { permission: Permission; title: string; description: string; coming: string }> = {
	'/inspection': {
		permission: 'inspection:read',
		title: 'Inspection',
		description: 'Read-only access for the duration of your grant.',
		coming:
			'The effective and historical versions, dossiers and audit extracts that your access grant covers will be listed here.',
	},
}

export function loader({ context, request }: Route.LoaderArgs) {
	const area = AREAS[new URL(request.url).pathname]
	if (!area) throw data({ message: 'There is no page at this address.' }, { status: 404 })
	authorize(context, area.permission)
	return { title: area.title, description: area.description, coming: area.coming }
}

export default function AreaPlaceholder({ loaderData }: Route.ComponentProps) {
	return (
		<>
			<PageHeader title={loaderData.title} description={loaderData.description} />
			<EmptyState title="Nothing here yet">{loaderData.coming}</EmptyState>
		</>
	)
}

export function meta({ loaderData }: Route.MetaArgs) {
	return [{ title: `${loaderData?.title ?? 'Bandproof'} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
