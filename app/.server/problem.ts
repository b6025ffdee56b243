/**
 * Problem details (RFC 9457) for /api/v1: the answers of `apiRoute()` (app/.server/api.ts) and the refusals of the
 * root security middleware on API paths. No I/O here, so the middleware can use it without the database.
 */

export const PROBLEM_CONTENT_TYPE = 'application/problem+json'

/** The path prefix of the REST API: refusals under it are problem+json, never an HTML page. */
export const API_PATH_PREFIX = '/api/v1'

export function isApiPath(pathname: string): boolean {
	return pathname === API_PATH_PREFIX || pathname.startsWith(`${API_PATH_PREFIX}/`)
}

/** Reason phrases of RFC 9110 §15 (and 429 from RFC 6585 §4), used as the problem's `title`. */
export const STATUS_TITLES: Record<number, string> = {
	400: 'Bad Request',
	401: 'Unauthorized',
	403: 'Forbidden',
	404: 'Not Found',
	405: 'Method Not Allowed',
	409: 'Conflict',
	411: 'Length Required',
	413: 'Content Too Large',
	415: 'Unsupported Media Type',
	422: 'Unprocessable Content',
	429: 'Too Many Requests',
	500: 'Internal Server Error',
	503: 'Service Unavailable',
}

/** An RFC 9457 problem; `type` stays 'about:blank', so `title` is the HTTP status phrase (RFC 9457 §4.2.1). */
export class ApiProblem extends Error {
	readonly status: number
	readonly extensions: Record<string, unknown>
	constructor(status: number, detail: string, extensions: Record<string, unknown> = {}) {
		super(detail)
		this.status = status
		this.extensions = extensions
	}
}

export function problemResponse(
	status: number,
	detail: string,
	extensions: Record<string, unknown> = {},
	headers: HeadersInit = {},
): Response {
	const body = { type: 'about:blank', title: STATUS_TITLES[status] ?? 'Error', status, detail, ...extensions }
	const merged = new Headers(headers)
	merged.set('Content-Type', PROBLEM_CONTENT_TYPE)
	merged.set('Cache-Control', 'no-store')
	return new Response(JSON.stringify(body), { status, headers: merged })
}

export function isProblemResponse(response: Response): boolean {
	return response.headers.get('Content-Type')?.toLowerCase().startsWith(PROBLEM_CONTENT_TYPE) ?? false
}
