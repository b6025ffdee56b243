import { randomBytes } from 'node:crypto'
import { createContext, data, type MiddlewareFunction } from 'react-router'
import { env } from '#app/.server/env.ts'
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
 * larger than the app reads (413) or of unknown length (411).
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
	if (!crossSite.ok) throw data({ message: crossSite.message }, { status: 403 })
	const body = decideBodySize({
		method: request.method,
		pathname: url.pathname,
		contentType: request.headers.get('Content-Type'),
		contentLength: request.headers.get('Content-Length'),
		transferEncoding: request.headers.get('Transfer-Encoding'),
	})
	if (!body.ok) {
		await discardBody(request, DRAIN_LIMIT_BYTES)
		throw data({ message: body.message }, { status: body.status })
	}
	return next()
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
