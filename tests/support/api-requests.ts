/** Requests to /api/v1 routes, called in-process as React Router would call their loader or action. */
import { db } from '#app/.server/db/client.ts'
import { createApiKey } from '#app/.server/services/api-keys.ts'
import type { Actor, ApiKeyScope } from '#shared/authz/permissions.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

export type RouteParams = Record<string, string | undefined>

/** A new API key of `actor` with these scopes; its bearer token. */
export async function apiKeyFor(actor: Actor, scopes: Array<ApiKeyScope>, name = 'test script'): Promise<string> {
	const created = await createApiKey(db, { actor, name, scopes, now: new Date() })
	if (!created.ok) throw created.error
	return created.value.token
}

/** A GET under /api/v1, with the key as a bearer token and, when given, the client address a proxy forwarded. */
export function apiGet(path: string, token: string | null, address?: string): Request {
	const headers: Record<string, string> = {}
	if (token) headers.Authorization = `Bearer ${token}`
	if (address) headers['X-Forwarded-For'] = address
	return new Request(`http://localhost/api/v1${path}`, { headers })
}

export function apiPostJson(path: string, token: string, body: unknown): Request {
	return new Request(`http://localhost/api/v1${path}`, {
		method: 'POST',
		headers: { Authorization: `Bearer ${token}`, 'Content-Type': 'application/json' },
		body: JSON.stringify(body),
	})
}

/** A multipart upload of one reference spectrum file (tests/support/reference-spectra.ts) as a sample. */
export function apiUpload(token: string, relPath: string): Request {
	const body = new FormData()
	body.append('file', new File([readReferenceFile(relPath).slice()], relPath.split('/').at(-1)!))
	body.append('purpose', 'sample')
	return new Request('http://localhost/api/v1/spectra', {
		method: 'POST',
		headers: { Authorization: `Bearer ${token}` },
		body,
	})
}

export const callApiRoute = (
	route: (args: { request: Request; params: RouteParams }) => Promise<Response>,
	request: Request,
	params: RouteParams = {},
) => route({ request, params })
