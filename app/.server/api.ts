import { z } from 'zod'
import { db } from '#app/.server/db/client.ts'
import { ApiProblem, isProblemResponse, problemResponse, STATUS_TITLES } from '#app/.server/problem.ts'
import {
	type ApiLimitOutcome,
	apiLimitMessage,
	rateLimitHeaders,
	takeApiRequest,
} from '#app/.server/security/api-limits.ts'
import { forwardedClientAddress } from '#app/.server/security/client-address.ts'
import { markApiKeyUsed, resolveApiKey } from '#app/.server/services/api-keys.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { type Actor, type ApiKeyScope, can, isReadOnly, type Permission } from '#shared/authz/permissions.ts'
import { DomainError } from '#shared/errors.ts'

/** Largest JSON request body the API reads (uploads have their own limit in app/.server/uploads.ts). */
export const MAX_JSON_BODY_BYTES = 64 * 1024

function messageOf(payload: unknown, fallback: string): string {
	if (typeof payload === 'string') return payload
	if (payload && typeof payload === 'object' && 'message' in payload && typeof payload.message === 'string')
		return payload.message
	return fallback
}

/** Whatever a handler threw, as problem+json: our problems, domain errors, and `data()`/Responses thrown by shared code. */
async function toProblem(thrown: unknown): Promise<Response> {
	if (thrown instanceof ApiProblem) {
		const headers: HeadersInit = thrown.status === 401 ? { 'WWW-Authenticate': 'Bearer realm="bandproof"' } : {}
		return problemResponse(thrown.status, thrown.message, thrown.extensions, headers)
	}
	if (thrown instanceof DomainError) return problemResponse(thrown.status, thrown.message)
	if (isThrownData(thrown)) {
		const status = thrown.init?.status ?? 500
		return problemResponse(status, messageOf(thrown.data, STATUS_TITLES[status] ?? 'Error'))
	}
	if (thrown instanceof Response) {
		if (isProblemResponse(thrown)) return thrown
		return problemResponse(
			thrown.status,
			(await thrown.text().catch(() => '')) || (STATUS_TITLES[thrown.status] ?? 'Error'),
		)
	}
	console.error('API request failed', thrown)
	return problemResponse(500, 'The server failed to answer this request; nothing was changed by the failure.')
}

/**
 * What `data(payload, { status })` throws (shared code answers refusals that way). Recognised by its shape: the
 * class is not exported by react-router's server entry.
 */
function isThrownData(
	value: unknown,
): value is { type: 'DataWithResponseInit'; data: unknown; init: ResponseInit | null } {
	return (
		typeof value === 'object' &&
		value !== null &&
		'type' in value &&
		value.type === 'DataWithResponseInit' &&
		'data' in value
	)
}

function bearerToken(request: Request): string | null {
	const header = request.headers.get('Authorization')
	const match = header ? /^Bearer\s+(\S+)\s*$/i.exec(header) : null
	return match?.[1] ?? null
}

const REFUSALS = {
	unknown: 'This API key is not valid.',
	revoked: 'This API key has been revoked.',
	deactivated: 'The account that owns this API key is deactivated.',
} as const

/**
 * The key's owner and scopes, after counting the request against the key's rate limit, or against the client
 * address when there is no valid key (app/.server/security/api-limits.ts). Refusals throw: 429 before 401, so a
 * client over its limit learns nothing more. The counted outcome is left in `counted` for the RateLimit headers.
 */
async function authenticate(
	request: Request,
	now: Date,
	counted: Counted,
): Promise<{ actor: Actor; scopes: ReadonlyArray<ApiKeyScope> }> {
	const token = bearerToken(request)
	const resolved = token ? await resolveApiKey(db, token) : null
	const subject = resolved?.status === 'ok' ? { keyId: resolved.keyId } : addressSubject(request)
	if (subject) {
		const outcome = takeApiRequest(subject, now.getTime())
		counted.outcome = outcome
		if (!outcome.decision.allowed)
			throw new ApiProblem(429, apiLimitMessage({ ...outcome, decision: outcome.decision }))
	}
	if (!resolved) throw new ApiProblem(401, 'Send an API key as "Authorization: Bearer <token>".')
	if (resolved.status !== 'ok') throw new ApiProblem(401, REFUSALS[resolved.status])
	await markApiKeyUsed(db, resolved.keyId, now)
	return resolved
}

/** The rate-limit count of one request, filled in by `authenticate`. */
type Counted = { outcome: ApiLimitOutcome | null }

function addressSubject(request: Request): { address: string } | null {
	const address = forwardedClientAddress(request.headers)
	return address ? { address } : null
}

/** Sets headers on a handler's answer; copies a response whose headers are frozen. */
function withHeaders(response: Response, headers: Array<[string, string]>): Response {
	if (headers.length === 0) return response
	try {
		for (const [name, value] of headers) response.headers.set(name, value)
		return response
	} catch {
		const copy = new Response(response.body, response)
		for (const [name, value] of headers) copy.headers.set(name, value)
		return copy
	}
}

async function readJson(request: Request): Promise<unknown> {
	const declared = Number(request.headers.get('Content-Length') ?? '0')
	if (declared > MAX_JSON_BODY_BYTES)
		throw new ApiProblem(413, `The request body may be at most ${MAX_JSON_BODY_BYTES} bytes.`)
	const type = request.headers.get('Content-Type') ?? ''
	if (!type.toLowerCase().startsWith('application/json'))
		throw new ApiProblem(415, 'Send the request body as application/json.')
	const text = await request.text()
	if (Buffer.byteLength(text, 'utf8') > MAX_JSON_BODY_BYTES)
		throw new ApiProblem(413, `The request body may be at most ${MAX_JSON_BODY_BYTES} bytes.`)
	try {
		return JSON.parse(text) as unknown
	} catch {
		throw new ApiProblem(400, 'The request body is not valid JSON.')
	}
}

function validationProblem(status: number, where: string, error: z.ZodError): ApiProblem {
	return new ApiProblem(status, `The ${where} is not valid: ${z.prettifyError(error)}`, {
		errors: error.issues.map((issue) => ({ path: issue.path.join('.'), message: issue.message })),
	})
}

export type ApiRouteOptions<Q extends z.ZodType, B extends z.ZodType> = {
	scope: ApiKeyScope
	permission: Permission
	/** Inspectors pass without `permission`; the handler then answers only what their grant covers. */
	inspectorsByGrant?: boolean
	query?: Q
	body?: B
}

export type ApiHandlerInput<Q extends z.ZodType, B extends z.ZodType> = {
	request: Request
	params: Record<string, string | undefined>
	actor: Actor
	/** True when the actor is here by an inspector's grant rather than by `permission`. */
	byGrant: boolean
	query: z.output<Q>
	body: z.output<B>
	now: Date
}

/**
 * The one wrapper of every /api/v1 route: API key → the app's Actor, the key's scope, the permission through
 * `can()`, zod-parsed query and body, and every failure as application/problem+json (RFC 9457).
 */
export function apiRoute<Q extends z.ZodType = z.ZodUndefined, B extends z.ZodType = z.ZodUndefined>(
	options: ApiRouteOptions<Q, B>,
	handler: (input: ApiHandlerInput<Q, B>) => Promise<Response>,
) {
	return async ({ request, params }: { request: Request; params: Record<string, string | undefined> }) => {
		const counted: Counted = { outcome: null }
		let response: Response
		try {
			response = await handle(options, handler, request, params, counted)
		} catch (thrown) {
			response = await toProblem(thrown)
		}
		return withHeaders(response, counted.outcome ? rateLimitHeaders(counted.outcome) : [])
	}
}

async function handle<Q extends z.ZodType, B extends z.ZodType>(
	options: ApiRouteOptions<Q, B>,
	handler: (input: ApiHandlerInput<Q, B>) => Promise<Response>,
	request: Request,
	params: Record<string, string | undefined>,
	counted: Counted,
): Promise<Response> {
	const now = new Date()
	const { actor, scopes } = await authenticate(request, now, counted)
	if (!scopes.includes(options.scope)) throw new ApiProblem(403, `This API key lacks the "${options.scope}" scope.`)
	if (isReadOnly(actor) && request.method !== 'GET' && request.method !== 'HEAD')
		throw new ApiProblem(403, 'Your access is read-only.')
	const permitted = can(actor, options.permission)
	const byGrant = !permitted && options.inspectorsByGrant === true && can(actor, 'inspection:read')
	if (!permitted && !byGrant) throw new ApiProblem(403, `Your roles do not allow this (${options.permission}).`)
	let query: unknown = undefined
	if (options.query) {
		const parsed = options.query.safeParse(Object.fromEntries(new URL(request.url).searchParams))
		if (!parsed.success) throw validationProblem(400, 'query string', parsed.error)
		query = parsed.data
	}
	let body: unknown = undefined
	if (options.body) {
		const parsed = options.body.safeParse(await readJson(request))
		if (!parsed.success) throw validationProblem(422, 'request body', parsed.error)
		body = parsed.data
	}
	return await handler({
		request,
		params,
		actor,
		byGrant,
		query: query as z.output<Q>,
		body: body as z.output<B>,
		now,
	})
}

/** A path parameter that must be a UUID: anything else cannot name a record, so it is a 404. */
export function uuidParam(params: Record<string, string | undefined>, name: string, what: string): string {
	const value = params[name]
	if (!z.uuid().safeParse(value).success) notFound(what)
	return value!
}

export function notFound(what: string): never {
	throw new ApiProblem(404, `${what} was not found.`)
}

/** An inspector's API read, as the audit trail records it (see recordInspectionView). */
export function viewOf(input: { actor: Actor; request: Request; now: Date }, versionId: string, purpose: string) {
	return {
		actor: input.actor,
		versionId,
		via: 'api' as const,
		purpose,
		ipAddress: clientAddress(input.request),
		now: input.now,
	}
}
