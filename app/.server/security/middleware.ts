import { randomBytes } from 'node:crypto'
import { createContext, data, type MiddlewareFunction } from 'react-router'
import { env } from '#app/.server/env.ts'
import { allowedApiMethods } from '#app/.server/openapi.ts'
import { isApiPath, isProblemResponse, problemResponse, STATUS_TITLES } from '#app/.server/problem.ts'
import { decideBodySize } from '#app/.server/security/body-limit.ts'
import { securityHeaders } from '#app/.server/security/headers.ts'
import { allowedOrigins, decideCrossSite } from '#app/.server/security/origin.ts'

type MiddlewareArgs = Parameters<MiddlewareFunction<Response>>

/** This request's CSP nonce: set by `securityHeadersMiddleware`, read by entry.server.tsx. */
export const nonceContext = createContext<string | null>(null)

/** 128 random bits, base64: a fresh nonce for every response (CSP3 §2.3.1 asks for at least 128 bits). */
export function createNonce(): string {
	return randomBytes(16).toString('base64')
}

/**
 * The outermost root middleware: creates the nonce, lets everything else run, and puts the security headers on
 * whatever comes back, including error pages and the refusals of `requestGuardMiddleware` (React Router's `next()`
 * turns a thrown response into a returned one).
 */
export async function securityHeadersMiddleware(
	{ request, context }: MiddlewareArgs[0],
	next: MiddlewareArgs[1],
): Promise<Response> {
	const nonce = createNonce()
	context.set(nonceContext, nonce)
	const response = await next()
	const publicUrl = env().BETTER_AUTH_URL
	const https = new URL(request.url).protocol === 'https:' || Boolean(publicUrl?.startsWith('https:'))
	const headers = securityHeaders({
		contentType: response.headers.get('Content-Type'),
		nonce,
		development: import.meta.env.DEV,
		https,
	})
	return withHeaders(response, headers)
}

/**
 * Refuses, before any loader or action runs: a cross-site request that would change something (403), and a body
 * larger than the app reads (413) or of unknown length (411). Under /api/v1 the refusal is application/problem+json
 * (RFC 9457), as every API answer is; elsewhere it is the message for the error page.
 */
export async function requestGuardMiddleware(
	{ request }: MiddlewareArgs[0],
	next: MiddlewareArgs[1],
): Promise<Response> {
	const url = new URL(request.url)
	const crossSite = decideCrossSite({
		method: request.method,
		origin: request.headers.get('Origin'),
		referer: request.headers.get('Referer'),
		cookie: request.headers.get('Cookie'),
		fetchSite: request.headers.get('Sec-Fetch-Site'),
		allowed: allowedOrigins(request.url, env().BETTER_AUTH_URL),
	})
	if (!crossSite.ok) throw refusal(url, 403, crossSite.message)
	const body = decideBodySize({
		method: request.method,
		pathname: url.pathname,
		contentType: request.headers.get('Content-Type'),
		contentLength: request.headers.get('Content-Length'),
		transferEncoding: request.headers.get('Transfer-Encoding'),
	})
	if (!body.ok) {
		await discardBody(request, DRAIN_LIMIT_BYTES)
		throw refusal(url, body.status, body.message)
	}
	return next()
}

function refusal(url: URL, status: number, message: string) {
	return isApiPath(url.pathname) ? problemResponse(status, message) : data({ message }, { status })
}

/**
 * Under /api/v1, turns any error answer that is not already a problem into application/problem+json (RFC 9457) with
 * the same status: an unknown API path (otherwise the app's HTML 404 page), a method the resource does not answer
 * (React Router's 405), and anything else that did not come through `apiRoute()`. Registered between the header
 * middleware and `requestGuardMiddleware`; other paths pass untouched.
 */
export async function apiProblemMiddleware({ request }: MiddlewareArgs[0], next: MiddlewareArgs[1]): Promise<Response> {
	const pathname = new URL(request.url).pathname
	if (!isApiPath(pathname)) return next()
	let response: Response
	try {
		response = await next()
	} catch (thrown) {
		if (!(thrown instanceof Response)) throw thrown
		response = thrown
	}
	if (response.status < 400 || isProblemResponse(response)) return response
	const detail = await apiErrorDetail(request, response)
	const keep: Array<[string, string]> = []
	for (const name of ['Allow', 'Retry-After', 'WWW-Authenticate']) {
		const value = response.headers.get(name)
		if (value) keep.push([name, value])
	}
	const allowed = response.status === 405 && !response.headers.has('Allow') ? allowedApiMethods(pathname) : null
	if (allowed) keep.push(['Allow', allowed.join(', ')])
	return problemResponse(response.status, detail, {}, keep)
}

async function apiErrorDetail(request: Request, response: Response): Promise<string> {
	switch (response.status) {
		case 404:
			return 'There is no API resource at this address. The paths of the API are listed in /api/v1/openapi.json.'
		case 405:
			return `This API resource does not answer ${request.method} requests. See /api/v1/openapi.json.`
		default: {
			// A `data({ message })` refusal from shared code arrives as JSON; HTML and stack traces are never passed on.
			if (response.status < 500 && response.headers.get('Content-Type')?.includes('application/json')) {
				const payload = (await response.json().catch(() => null)) as { message?: unknown } | null
				if (typeof payload?.message === 'string') return payload.message
			}
			return STATUS_TITLES[response.status] ?? 'The request failed.'
		}
	}
}

/**
 * A refused body up to this size is read and thrown away before answering, so the browser that sent a long form gets
 * the 413 page instead of a reset connection (a server that stops reading mid-upload makes the client's socket fail).
 * Anything larger is not a form typed by a person, and its connection is dropped unread.
 */
const DRAIN_LIMIT_BYTES = 8 * 1024 * 1024

async function discardBody(request: Request, limit: number): Promise<void> {
	const length = Number(request.headers.get('Content-Length') ?? Number.NaN)
	if (!request.body || !(length <= limit)) return
	const reader = request.body.getReader()
	let seen = 0
	for (;;) {
		const { done, value } = await reader.read()
		if (done) return
		seen += value.byteLength
		if (seen > limit) {
			await reader.cancel()
			return
		}
	}
}

/** Sets headers, keeping a Content-Security-Policy the route chose itself. Copies a response whose headers are frozen. */
function withHeaders(response: Response, headers: Array<[string, string]>): Response {
	const apply = (target: Headers) => {
		for (const [name, value] of headers) {
			if (name === 'Content-Security-Policy' && target.has(name)) continue
			target.set(name, value)
		}
	}
	try {
		apply(response.headers)
		return response
	} catch {
		const copy = new Response(response.body, response)
		apply(copy.headers)
		return copy
	}
}
