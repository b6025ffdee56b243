import { asc, eq } from 'drizzle-orm'
import { createContext, data, redirect, type RouterContextProvider } from 'react-router'
import { auth } from '#app/.server/auth.ts'
import { db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { userRoles } from '#app/.server/db/schema/roles.ts'
import { type Actor, can, isReadOnly, type Permission } from '#shared/authz/permissions.ts'

/** The signed-in user of the current request, set by the signed-in layout's middleware. */
export const actorContext = createContext<Actor | null>(null)

/** Resolves the session cookie to an active user with their roles, or null. */
export async function resolveActor(request: Request): Promise<Actor | null> {
	const session = await auth().api.getSession({ headers: request.headers })
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
 * Signed-in routes (patterns as in app/routes.ts) whose action changes no record, so that read-only roles may post to
 * them: checking a copy of a dossier against the system only reads, and records that it did, as a page view does.
 * Each action still authorises its own permission.
 */
export const READ_ONLY_ACTIONS: ReadonlySet<string> = new Set(['/verify'])

/**
 * Middleware body for every signed-in route: no session → the sign-in page (with a way back);
 * a read-only role sending anything but GET/HEAD → 403, whatever the action would have said, unless the route's
 * `pattern` is one of READ_ONLY_ACTIONS.
 */
export async function requireSignedIn(
	request: Request,
	context: Readonly<RouterContextProvider>,
	pattern: string,
): Promise<Actor> {
	const actor = await resolveActor(request)
	if (!actor) {
		const url = new URL(request.url)
		const back = url.pathname + url.search
		throw redirect(`/sign-in?redirectTo=${encodeURIComponent(back)}`)
	}
	// NOTE: React Router joins the matched paths without a leading slash ('verify'); both spellings are accepted.
	const route = `/${pattern.replace(/^\/+/, '')}`
	const reads = request.method === 'GET' || request.method === 'HEAD' || READ_ONLY_ACTIONS.has(route)
	if (isReadOnly(actor) && !reads) {
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
