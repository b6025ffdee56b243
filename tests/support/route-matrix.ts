/**
 * Machinery of the role × route matrix (tests/integration/route-matrix.test.ts): reading the expectation table,
 * walking app/routes.ts, and fingerprinting the database to show that a refused request changed nothing.
 */
import type { RouteConfigEntry } from '@react-router/dev/routes'
import { sql } from 'drizzle-orm'
import { matchRoutes, type RouteObject } from 'react-router'
import type { Db } from '#app/.server/db/client.ts'
import { ROLES, type Role } from '#shared/authz/permissions.ts'

/** Who sends a request: a signed-in user holding exactly one role, or an anonymous visitor. */
export type Who = 'anonymous' | Role
export const EVERYONE: ReadonlyArray<Who> = ['anonymous', ...ROLES]

/**
 * One answer, as the table writes it: the status code, or `login` for a 302 to the sign-in page that carries the way
 * back (`/sign-in?redirectTo=…`), which is how the signed-in pages turn away an anonymous visitor.
 */
export type Cell = string

export type MatrixRow = {
	method: 'GET' | 'POST'
	/** The URL as written in the table: `:name` stands for a fixture's id, `#label` tells variants apart. */
	url: string
	expected: Record<Who, Cell>
}

const CELL = /^(login|[1-5]\d\d)$/

/**
 * Parses the whitespace-aligned table: a header `method url anonymous author …` naming every role once, then one row
 * per request; a line starting with `//` is a comment.
 */
export function parseMatrix(table: string): Array<MatrixRow> {
	const lines = table
		.split('\n')
		.map((line) => line.trim())
		.filter((line) => line !== '' && !line.startsWith('//'))
	const [header, ...rows] = lines.map((line) => line.split(/\s+/))
	const columns = header?.slice(2) ?? []
	if (header?.[0] !== 'method' || header[1] !== 'url' || [...columns].sort().join() !== [...EVERYONE].sort().join())
		throw new Error(
			`The matrix header must be "method url" and then ${EVERYONE.join(', ')}; it is ${header?.join(' ')}`,
		)
	const seen = new Set<string>()
	return rows.map((cells) => {
		const [method, url, ...answers] = cells
		const where = cells.join(' ')
		if (method !== 'GET' && method !== 'POST') throw new Error(`Unknown method in matrix row: ${where}`)
		if (!url?.startsWith('/')) throw new Error(`The URL must start with "/": ${where}`)
		if (answers.length !== columns.length || !answers.every((answer) => CELL.test(answer)))
			throw new Error(`Each row needs ${columns.length} answers (a status or "login"): ${where}`)
		const key = `${method} ${url}`
		if (seen.has(key)) throw new Error(`The matrix lists ${key} twice`)
		seen.add(key)
		const expected = Object.fromEntries(columns.map((who, i) => [who, answers[i]!])) as Record<Who, Cell>
		return { method, url, expected }
	})
}

/** How the table writes an actual response. */
export function cellOf(response: Response): Cell {
	const location = response.headers.get('Location') ?? ''
	if (response.status === 302 && /^\/sign-in\?redirectTo=/.test(location)) return 'login'
	return String(response.status)
}

/**
 * A refusal: sign in first (RFC 9110 §15.5.2 401 for the API, a redirect to the sign-in page for pages), forbidden
 * (§15.5.4 403), or not found (§15.5.5 404, also how the API hides what a grant does not cover).
 */
export function isRefusal(cell: Cell): boolean {
	return cell === 'login' || cell === '401' || cell === '403' || cell === '404'
}

/** Fills `:name` placeholders from the fixtures; an unknown name is a mistake in the table. */
export function fill(template: string, values: Record<string, string>): string {
	return template.replace(/:([A-Za-z]+)/g, (_, name: string) => {
		const value = values[name]
		if (value === undefined) throw new Error(`No fixture named :${name} (in ${template})`)
		return value
	})
}

/** One route of app/routes.ts: its file (relative to app/, as written there) and its full URL pattern. */
export type ConfiguredRoute = { file: string; id: string; pattern: string; leaf: boolean }

/** The route id React Router gives a file: its path under app/ without the extension. */
export function routeIdOf(file: string): string {
	return file.replace(/\.[a-z0-9]+$/i, '')
}

/** Every route of the config, depth first, with its full pattern and whether a URL can end on it. */
export function walkRoutes(config: ReadonlyArray<RouteConfigEntry>, parent = ''): Array<ConfiguredRoute> {
	return config.flatMap((entry) => {
		const pattern = entry.path === undefined ? parent : `${parent}/${entry.path}`.replace(/\/+/g, '/')
		const self: ConfiguredRoute = {
			file: entry.file,
			id: entry.id ?? routeIdOf(entry.file),
			pattern: pattern || '/',
			leaf: !entry.children?.length,
		}
		return [self, ...walkRoutes(entry.children ?? [], pattern)]
	})
}

/** The same config as React Router route objects, so that URLs are matched by the router's own ranking. */
export function toRouteObjects(config: ReadonlyArray<RouteConfigEntry>): Array<RouteObject> {
	return config.map((entry) => {
		const id = entry.id ?? routeIdOf(entry.file)
		if (entry.index) return { id, index: true, path: entry.path, caseSensitive: entry.caseSensitive }
		const children = entry.children ? toRouteObjects(entry.children) : undefined
		return { id, path: entry.path, caseSensitive: entry.caseSensitive, children }
	})
}

/** The id of the route a pathname ends on (the deepest match), or null when nothing matches. */
export function leafRouteOf(routes: Array<RouteObject>, pathname: string): string | null {
	const matches = matchRoutes(routes, pathname)
	return matches?.at(-1)?.route.id ?? null
}

/**
 * Columns that change by design when a request merely arrives, not because it did something: a session's expiry
 * slides with activity (better-auth `updateAge`), and an API key notes its last use even when the request is then
 * refused. Everything else in every table must stay as it was.
 */
const VOLATILE_COLUMNS: Record<string, Array<string>> = {
	sessions: ['updated_at', 'expires_at'],
	api_keys: ['last_used_at'],
}

/** Row count and an MD5 of the sorted rows (as JSON, volatile columns left out) of every application table. */
export async function fingerprintDatabase(db: Db): Promise<Record<string, string>> {
	const tables = await db.execute<{ name: string }>(sql`
		select table_name as name from information_schema.tables
		where table_schema = 'public' and table_type = 'BASE TABLE' and table_name <> '__drizzle_migrations'
		order by table_name`)
	const parts = tables.map(({ name }) => {
		if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`Unexpected table name ${name}`)
		const dropped = (VOLATILE_COLUMNS[name] ?? []).map((column) => ` - '${column}'`).join('')
		return `select '${name}' as name, count(*) || ' rows, md5 ' || md5(coalesce(string_agg(r, E'\\n' order by r), ''))
			as fingerprint from (select (to_jsonb(t)${dropped})::text as r from public."${name}" t) s`
	})
	const rows = await db.execute<{ name: string; fingerprint: string }>(sql.raw(parts.join('\nunion all\n')))
	return Object.fromEntries(rows.map((row) => [row.name, row.fingerprint]))
}

/** The tables whose fingerprint differs, e.g. `audit_events: 12 rows, md5 … → 13 rows, md5 …`. */
export function changedTables(before: Record<string, string>, after: Record<string, string>): Array<string> {
	const names = [...new Set([...Object.keys(before), ...Object.keys(after)])].sort()
	return names.filter((name) => before[name] !== after[name]).map((name) => `${name}: ${before[name]} → ${after[name]}`)
}
