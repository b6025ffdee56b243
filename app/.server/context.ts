import { asc, eq } from 'drizzle-orm'
import { createContext, data, redirect, type RouterContextProvider } from 'react-router'
import { auth } from '#app/.server/auth.ts'
import { db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { userRoles } from '#app/.server/db/schema/roles.ts'
import { type Actor, can, isReadOnly, type Permission } from '#shared/authz/permissions.ts'

/** The signed-in user of the current request, set by the signed-in layout's middleware. */
export const actorContext = createContext<Actor | null>(null)

/**
 * Resolves the session cookie to an active user with their roles, or null. Each resolution counts as activity and
 * extends an idle session, unless `refresh` is false (a page polling in the background is not the person working).
 */
export async function resolveActor(
	request: Request,
	{ refresh = true }: { refresh?: boolean } = {},
): Promise<Actor | null> {
	const session = await auth().api.getSession({
		headers: request.headers,
		query: refresh ? undefined : { disableRefresh: true },
	})
	if (!session) return null
	const [user] = await db.select().from(users).where(eq(users.id, session.user.id))
	if (!user || user.deactivatedAt) return null
	const roles = await db
		.select({ role: userRoles.role })
		.from(userRoles)
		.where(eq(userRoles.userId, user.id))
		.orderBy(asc(userRoles.role))
	return { id: user.id, name: user.name, email: user.email, roles: roles.map((row) => row.role) }
}

/**
 * The few signed-in routes that the layout treats differently, keyed by route pattern: the matched route's path from
 * the url map (app/routes.ts), which React Router passes to middleware, never the path the request claims. Each
 * exception is narrow and says why; everything not listed gets the rules of requireSignedIn.
 */
type RoutePolicy = {
	/**
	 * A read-only account may send non-GET requests to this route when it holds this permission. The route's action
	 * still authorises every request itself.
	 */
	readOnlyMayWrite?: Permission
	/** Polled by the page in the background: not activity, so it never extends an idle session. */
	background?: true
}
const ROUTE_POLICIES: Readonly<Record<string, RoutePolicy>> = {
	// Inspectors create and revoke their own API keys; apiKeyScopesFor() gives them the read scope only.
	'/settings/api-keys': { readOnlyMayWrite: 'api-key:manage' },
	// Checking a copy of a dossier against the system only reads (and records that it did, as a page view does).
	'/verify': { readOnlyMayWrite: 'dossier:verify' },
	// The sidebar's queue count, refreshed every minute while the tab is visible.
	'/queue/count': { background: true },
}

/**
 * The policy of a matched route. React Router joins the route paths without a leading slash on the server
 * ("settings/api-keys"); a leading slash is accepted too.
 */
function policyFor(pattern: string | undefined): RoutePolicy {
	if (pattern === undefined) return {}
	const key = `/${pattern.replace(/^\/+/, '')}`
	return Object.hasOwn(ROUTE_POLICIES, key) ? ROUTE_POLICIES[key]! : {}
}

/** Where to come back to after signing in: the page itself, or for a background request the page that made it. */
function returnPath(request: Request, background: boolean): string {
	const url = new URL(request.url)
	if (!background) return url.pathname + url.search
	const referer = URL.parse(request.headers.get('referer') ?? '')
	return referer && referer.origin === url.origin ? referer.pathname + referer.search : '/'
}

/**
 * Middleware body for every signed-in route: no session → the sign-in page (with a way back);
 * a read-only role sending anything but GET/HEAD → 403, whatever the action would have said, except on a route
 * whose policy names a permission the account holds (see ROUTE_POLICIES).
 * `pattern` is the matched route's pattern from the middleware's arguments.
 */
export async function requireSignedIn(
	request: Request,
	context: Readonly<RouterContextProvider>,
	pattern?: string,
): Promise<Actor> {
	const policy = policyFor(pattern)
	const actor = await resolveActor(request, { refresh: !policy.background })
	if (!actor) {
		throw redirect(`/sign-in?redirectTo=${encodeURIComponent(returnPath(request, policy.background === true))}`)
	}
	const reading = request.method === 'GET' || request.method === 'HEAD'
	const excepted = policy.readOnlyMayWrite !== undefined && can(actor, policy.readOnlyMayWrite)
	if (isReadOnly(actor) && !reading && !excepted) {
		throw data({ message: 'Your access is read-only.' }, { status: 403 })
	}
	context.set(actorContext, actor)
	return actor
}

/** The only place that turns "not allowed" into HTTP 403. Every loader and action calls it. */
export function authorize(context: Readonly<RouterContextProvider>, permission: Permission): Actor {
	const actor = context.get(actorContext)
	if (!actor) throw redirect('/sign-in')
	if (!can(actor, permission)) {
		throw data({ message: `Your roles do not allow this (${permission}).` }, { status: 403 })
	}
	return actor
}
