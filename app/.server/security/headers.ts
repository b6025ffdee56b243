/**
 * Security headers for every response the app makes: HTML documents, React Router's data requests, resource routes
 * (files, PDFs, CSV, JSON) and error pages. Pure builders; app/.server/security/middleware.ts applies them.
 */

export type DocumentPolicyOptions = {
	/** The per-request nonce that React Router's and React's inline scripts carry. */
	nonce: string
	/** Vite's dev server injects its client and styles without a nonce and talks over a WebSocket. */
	development: boolean
}

/**
 * The Content-Security-Policy of an HTML page.
 *
 * Scripts: our own files and inline scripts that carry this response's nonce (React Router's hydration data, its
 * module bootstrap and scroll restoration, React's streaming scripts), nothing else: no 'unsafe-inline', no eval.
 *
 * Styles: our own style sheets; no inline <style> elements (style-src-elem). Inline style ATTRIBUTES are allowed
 * (style-src-attr 'unsafe-inline') because React renders `style={{ height }}` of the spectrum charts as an attribute
 * in the server's HTML, and a nonce cannot cover attributes. A style attribute cannot run script; the risk is CSS
 * injection, which needs HTML injection first, and React escapes all text. Browsers that predate the -elem/-attr
 * directives fall back to style-src, which therefore says 'self' 'unsafe-inline'.
 *
 * Frames: the version page shows the dossier PDF from this server in an iframe (frame-src 'self'), and only this
 * server may frame our pages (frame-ancestors 'self').
 */
export function documentPolicy({ nonce, development }: DocumentPolicyOptions): string {
	const directives: Array<[string, ...Array<string>]> = [
		['default-src', "'self'"],
		development
			? ['script-src', "'self'", "'unsafe-inline'", "'unsafe-eval'"]
			: ['script-src', "'self'", `'nonce-${nonce}'`],
		['style-src', "'self'", "'unsafe-inline'"],
		development ? ['style-src-elem', "'self'", "'unsafe-inline'"] : ['style-src-elem', "'self'"],
		['style-src-attr', "'unsafe-inline'"],
		['img-src', "'self'", 'data:', 'blob:'],
		['font-src', "'self'"],
		development ? ['connect-src', "'self'", 'ws:', 'wss:'] : ['connect-src', "'self'"],
		['frame-src', "'self'"],
		['frame-ancestors', "'self'"],
		['object-src', "'none'"],
		['base-uri', "'self'"],
		['form-action', "'self'"],
	]
	return directives.map((parts) => parts.join(' ')).join('; ')
}

/**
 * The policy of everything that is not an HTML page (data requests, JSON, CSV, PDF, spectrum files): it loads nothing
 * and runs nothing should a browser ever render it as a document, and only our own pages may frame it. Chromium's PDF
 * viewer is not held back by it: the dossier preview renders in its iframe under this policy.
 */
export const RESOURCE_POLICY = "default-src 'none'; frame-ancestors 'self'; base-uri 'none'; form-action 'none'"

/** The Permissions-Policy: nothing in Bandproof uses the camera, the microphone, the location or payments. */
export const PERMISSIONS_POLICY = 'camera=(), microphone=(), geolocation=(), payment=()'

export type SecurityHeaderOptions = {
	contentType: string | null
	nonce: string
	development: boolean
	/** Whether the browser reached us over HTTPS (then Strict-Transport-Security is sent). */
	https: boolean
}

/** The headers to set on a response. A Content-Security-Policy a route set itself is kept by the caller. Pure. */
export function securityHeaders({
	contentType,
	nonce,
	development,
	https,
}: SecurityHeaderOptions): Array<[string, string]> {
	const type = contentType?.split(';')[0]?.trim().toLowerCase() ?? ''
	const policy = type === 'text/html' ? documentPolicy({ nonce, development }) : RESOURCE_POLICY
	const headers: Array<[string, string]> = [
		['Content-Security-Policy', policy],
		['X-Content-Type-Options', 'nosniff'],
		['X-Frame-Options', 'SAMEORIGIN'],
		['Referrer-Policy', 'same-origin'],
		['Permissions-Policy', PERMISSIONS_POLICY],
		['Cross-Origin-Opener-Policy', 'same-origin'],
		['Cross-Origin-Resource-Policy', 'same-origin'],
	]
	// A year, this host only; browsers ignore it over plain HTTP (RFC 6797 §8.1).
	if (https) headers.push(['Strict-Transport-Security', 'max-age=31536000'])
	return headers
}
