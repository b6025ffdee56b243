import { useEffect, useRef } from 'react'
import { Form, NavLink, Outlet, type ShouldRevalidateFunctionArgs, useFetcher } from 'react-router'
import type { Route } from './+types/layout'
import { actorContext, authorize, requireSignedIn } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listQueue } from '#app/.server/queries/queue.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { cn } from '#app/utils/misc.ts'
import { type Actor, can, type Permission, ROLE_LABELS } from '#shared/authz/permissions.ts'
import { newerQueueCount, type QueueCount, QueueCountSchema } from '#shared/queue/queue-count.ts'

export const middleware: Array<Route.MiddlewareFunction> = [
	async ({ request, context, pattern }, next) => {
		await requireSignedIn(request, context, pattern)
		return next()
	},
]

export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'workspace:enter')
	const queue: QueueCount = {
		count: can(actor, 'queue:read') ? (await listQueue(db, actor)).length : 0,
		at: new Date().toISOString(),
	}
	return { actor: context.get(actorContext) ?? actor, queue }
}

/**
 * Typing in a live search changes only the query string of the page shown: nothing in the sidebar depends on it,
 * so the layout's loader is not asked again for each pause in typing. Form posts, other pages and an explicit
 * revalidation (same address) still revalidate.
 */
export function shouldRevalidate({
	currentUrl,
	nextUrl,
	formMethod,
	defaultShouldRevalidate,
}: ShouldRevalidateFunctionArgs) {
	const sameListQuery =
		(formMethod === undefined || formMethod === 'GET') &&
		currentUrl.pathname === nextUrl.pathname &&
		currentUrl.search !== nextUrl.search
	return sameListQuery ? false : defaultShouldRevalidate
}

type NavItem = { to: string; label: string; permission: Permission; end?: boolean }
type NavGroup = { heading: string | null; items: Array<NavItem> }

const NAVIGATION: Array<NavGroup> = [
	{ heading: null, items: [{ to: '/', label: 'Overview', permission: 'workspace:enter', end: true }] },
	{
		heading: 'Library',
		items: [
			{ to: '/materials', label: 'Materials', permission: 'material:read' },
			{ to: '/spectra', label: 'Spectra', permission: 'spectrum:read' },
			{ to: '/specifications', label: 'Specifications', permission: 'spec:read' },
		],
	},
	{
		heading: 'Release testing',
		items: [
			{ to: '/lots', label: 'Lots and runs', permission: 'run:read' },
			{ to: '/trends', label: 'Trends', permission: 'run:read' },
			{ to: '/instruments', label: 'Instruments', permission: 'instrument:read' },
		],
	},
	{
		heading: 'Work',
		items: [
			{ to: '/queue', label: 'My queue', permission: 'queue:read' },
			{ to: '/audit', label: 'Audit trail', permission: 'audit:read' },
			{ to: '/verify', label: 'Verify a copy', permission: 'dossier:verify' },
			{ to: '/inspection', label: 'Inspection', permission: 'inspection:read' },
		],
	},
	{
		heading: 'Integration',
		items: [
			{ to: '/settings/api-keys', label: 'API keys', permission: 'api-key:manage' },
			{ to: '/api-docs', label: 'API reference', permission: 'workspace:enter' },
		],
	},
	{
		heading: 'Administration',
		items: [
			{ to: '/admin/users', label: 'Users and roles', permission: 'user:manage' },
			{ to: '/admin/grants', label: 'Access grants', permission: 'grant:manage' },
			{ to: '/admin/mailbox', label: 'Outgoing mail', permission: 'mailbox:read' },
		],
	},
]

function visibleNavigation(actor: Actor): Array<NavGroup> {
	return NAVIGATION.map((group) => ({
		...group,
		items: group.items.filter((item) => can(actor, item.permission)),
	})).filter((group) => group.items.length > 0)
}

export default function SignedInLayout({ loaderData }: Route.ComponentProps) {
	const { actor } = loaderData
	const queueCount = useLiveQueueCount(loaderData.queue, can(actor, 'queue:read'))
	return (
		<div className="flex min-h-screen">
			<a
				href="#main"
				className="bg-accent text-paper sr-only z-50 rounded px-3 py-2 focus:not-sr-only focus:fixed focus:top-2 focus:left-2"
			>
				Skip to content
			</a>
			<aside className="border-rule bg-sheet flex w-60 shrink-0 flex-col border-r">
				<div className="border-rule flex items-center gap-2 border-b px-5 py-4">
					<img src="/favicon.svg" alt="" className="h-7 w-7" />
					<span className="font-serif text-lg font-bold">Bandproof</span>
				</div>
				<nav aria-label="Main" className="flex-1 space-y-5 px-3 py-4">
					{visibleNavigation(actor).map((group) => (
						<div key={group.heading ?? 'top'}>
							{group.heading ? (
								<p className="text-ink-faint mb-1 px-2 text-xs font-semibold tracking-wider uppercase">
									{group.heading}
								</p>
							) : null}
							<ul className="space-y-0.5">
								{group.items.map((item) => (
									<li key={item.to}>
										<NavLink
											to={item.to}
											end={item.end}
											className={({ isActive }) =>
												cn(
													'block rounded-md px-2 py-1.5 text-sm',
													isActive
														? 'bg-accent-soft text-accent-strong font-semibold'
														: 'text-ink-soft hover:bg-paper hover:text-ink',
												)
											}
										>
											{item.label}
											{item.to === '/queue' && queueCount > 0 ? (
												<>
													<span className="sr-only">, {queueCount} waiting</span>
													<span
														aria-hidden="true"
														className="bg-accent text-paper ml-2 rounded-full px-1.5 py-0.5 text-xs font-semibold"
														data-testid="queue-count"
													>
														{queueCount}
													</span>
												</>
											) : null}
										</NavLink>
									</li>
								))}
							</ul>
						</div>
					))}
				</nav>
				<UserPanel actor={actor} />
			</aside>
			<main id="main" className="min-w-0 flex-1 px-8 py-6">
				<Outlet />
			</main>
		</div>
	)
}

/** How often the sidebar asks for the queue count while the tab is visible. */
const QUEUE_POLL_MS = 60_000
/** Focus and visibility often change together: one request for both. */
const QUEUE_REFRESH_GAP_MS = 5_000

/**
 * The queue count from the layout loader, kept fresh by a fetcher on /queue/count: every QUEUE_POLL_MS while the
 * tab is visible, and when the window gets focus or the tab becomes visible again. Whichever count the server made
 * last wins, so a revalidation after a workflow step is never overwritten by an older poll.
 */
function useLiveQueueCount(initial: QueueCount, enabled: boolean): number {
	const fetcher = useFetcher({ key: 'queue-count' })
	const lastAsked = useRef(0)
	const { load, state } = fetcher
	const busy = useRef(false)
	busy.current = state !== 'idle'

	useEffect(() => {
		if (!enabled) return
		const refresh = (force: boolean) => {
			if (document.visibilityState !== 'visible' || busy.current) return
			if (!force && Date.now() - lastAsked.current < QUEUE_REFRESH_GAP_MS) return
			lastAsked.current = Date.now()
			void load('/queue/count')
		}
		const onFocus = () => refresh(false)
		const timer = setInterval(() => refresh(true), QUEUE_POLL_MS)
		window.addEventListener('focus', onFocus)
		document.addEventListener('visibilitychange', onFocus)
		return () => {
			clearInterval(timer)
			window.removeEventListener('focus', onFocus)
			document.removeEventListener('visibilitychange', onFocus)
		}
	}, [enabled, load])

	const fetched = QueueCountSchema.safeParse(fetcher.data)
	return newerQueueCount(initial, fetched.success ? fetched.data : null).count
}

function UserPanel({ actor }: { actor: Actor }) {
	return (
		<section aria-label="Signed-in user" className="border-rule border-t px-5 py-4">
			<p className="text-sm font-semibold" data-testid="user-name">
				{actor.name}
			</p>
			<p className="text-ink-faint truncate text-xs">{actor.email}</p>
			<ul aria-label="Your roles" className="mt-2 flex flex-wrap gap-1">
				{actor.roles.map((role) => (
					<li key={role} className="bg-accent-soft text-accent-strong rounded px-1.5 py-0.5 text-xs">
						{ROLE_LABELS[role]}
					</li>
				))}
			</ul>
			<Form method="post" action="/sign-out" className="mt-3">
				<button type="submit" className="text-accent text-sm font-medium underline-offset-4 hover:underline">
					Sign out
				</button>
			</Form>
		</section>
	)
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
