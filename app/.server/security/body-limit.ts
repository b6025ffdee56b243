import { isApiPath } from '#app/.server/problem.ts'

/**
 * A cap on request bodies, so no action reads an unbounded amount into memory.
 *
 * Every body is at most MAX_BODY_BYTES, judged by Content-Length before anything is read (Node's HTTP parser never
 * delivers more than Content-Length says). A body without a length (chunked) is refused with 411, because its size
 * cannot be known before reading it. The only exception is a multipart upload to one of STREAMED_UPLOAD_PATHS: those
 * actions stream the body through `parseFormData` with their own per-file, per-part and per-request limits
 * (app/.server/uploads.ts, app/routes/verify.tsx), which answer 413 as they pass them.
 */

/** 1 MiB: the largest form (a specification version with a long band table) is a few tens of kilobytes. */
export const MAX_BODY_BYTES = 1024 * 1024

/** Paths (as in app/routes.ts) whose action parses a multipart upload with its own limits. */
export const STREAMED_UPLOAD_PATHS: ReadonlySet<string> = new Set([
	'/spectra/upload',
	'/spectra/upload-file',
	'/verify',
	'/api/v1/spectra',
])

/** Route patterns with a parameter whose action parses a multipart upload with its own limits. */
export const STREAMED_UPLOAD_PATTERNS: ReadonlyArray<RegExp> = [
	/^\/lots\/new$/,
	/^\/instruments\/[^/]+$/,
	/^\/runs\/[^/]+\/retest$/,
]

export type BodyInput = {
	method: string
	pathname: string
	contentType: string | null
	contentLength: string | null
	transferEncoding: string | null
}

export type BodyDecision = { ok: true } | { ok: false; status: 411 | 413; message: string }

/** Whether a request's body may be read. Pure. */
export function decideBodySize(input: BodyInput, maxBytes = MAX_BODY_BYTES): BodyDecision {
	const method = input.method.toUpperCase()
	if (method === 'GET' || method === 'HEAD') return { ok: true }
	const multipart = /^multipart\/form-data\b/i.test(input.contentType?.trim() ?? '')
	if (multipart && isStreamedUpload(routePath(input.pathname))) return { ok: true }
	const length = parseLength(input.contentLength)
	if (length === null) {
		if (!input.transferEncoding) return { ok: true } // no body at all
		return {
			ok: false,
			status: 411,
			message: 'The request did not say how large it is (Content-Length), so Bandproof did not read it.',
		}
	}
	if (length > maxBytes) {
		if (isApiPath(input.pathname))
			return {
				ok: false,
				status: 413,
				message: `The request body is larger than ${formatBytes(maxBytes)}, the most Bandproof reads; nothing was changed.`,
			}
		return {
			ok: false,
			status: 413,
			message: `The form sent is larger than ${formatBytes(maxBytes)}, the most Bandproof reads from a form. Nothing was changed; shorten the text and send it again.`,
		}
	}
	return { ok: true }
}

function isStreamedUpload(path: string): boolean {
	return STREAMED_UPLOAD_PATHS.has(path) || STREAMED_UPLOAD_PATTERNS.some((pattern) => pattern.test(path))
}

/** The route path a request is for: React Router's data requests add `.data` (and call the root `/_root.data`). */
export function routePath(pathname: string): string {
	const path = pathname.replace(/\.data$/, '').replace(/\/+$/, '')
	return path === '' || path === '/_root' ? '/' : path
}

function parseLength(value: string | null): number | null {
	if (value === null || !/^\s*\d+\s*$/.test(value)) return null
	return Number(value)
}

function formatBytes(bytes: number): string {
	return bytes % (1024 * 1024) === 0 ? `${bytes / 1024 / 1024} MB` : `${Math.round(bytes / 1024)} kB`
}
