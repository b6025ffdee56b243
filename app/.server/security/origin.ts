/**
 * Protection of form posts against cross-site requests (CSRF).
 *
 * Browsers name the page that sent a request in Origin (every POST from a current browser), or failing that in
 * Referer. A request that changes something (anything but GET and HEAD; React Router sends every other method to an
 * action) is accepted only from this server's own origin. A request with neither header is not from a web page that
 * a browser vouches for: it is accepted only when it carries no cookie, because without a cookie it cannot ride on a
 * signed-in session (scripts, health checks, the coming API with its keys). Sec-Fetch-Site: cross-site is refused
 * whatever else the request says.
 */

export type CrossSiteInput = {
	method: string
	origin: string | null
	referer: string | null
	cookie: string | null
	fetchSite: string | null
	/** Origins this server answers as, e.g. from `allowedOrigins`. */
	allowed: ReadonlySet<string>
}

export type CrossSiteDecision = { ok: true } | { ok: false; message: string }

const SAFE_METHODS = new Set(['GET', 'HEAD'])

const REFUSAL =
	'This request was sent from another site, so Bandproof refused it and changed nothing. Open Bandproof at its own address and try again.'

/** Whether a request may reach an action. Pure. */
export function decideCrossSite(input: CrossSiteInput): CrossSiteDecision {
	if (SAFE_METHODS.has(input.method.toUpperCase())) return { ok: true }
	if (input.fetchSite?.toLowerCase() === 'cross-site') return { ok: false, message: REFUSAL }
	if (input.origin !== null) {
		// "null" is what sandboxed frames, data: URLs and some cross-origin redirects send: never our own page.
		return input.allowed.has(input.origin.toLowerCase()) ? { ok: true } : { ok: false, message: REFUSAL }
	}
	if (input.referer !== null) {
		const origin = originOf(input.referer)
		return origin && input.allowed.has(origin) ? { ok: true } : { ok: false, message: REFUSAL }
	}
	if (input.cookie) {
		return {
			ok: false,
			message:
				'This request carries a session but does not say which page sent it, so Bandproof refused it and changed nothing. Open Bandproof at its own address and try again.',
		}
	}
	return { ok: true }
}

/**
 * The origins this server answers as: that of the request's own URL (what the Host header named), that of the public
 * URL (BETTER_AUTH_URL, which is what browsers use behind a TLS-terminating proxy), and for a loopback public URL its
 * localhost/127.0.0.1 twin, because browsers count the two as different origins. Pure.
 */
export function allowedOrigins(requestUrl: string, publicUrl: string | undefined): Set<string> {
	const origins = new Set<string>()
	const own = originOf(requestUrl)
	if (own) origins.add(own)
	if (publicUrl) for (const origin of loopbackTwins(publicUrl)) origins.add(origin)
	return origins
}

/** The origin of a public URL, plus its localhost/127.0.0.1 twin when it is one of those. Pure. */
export function loopbackTwins(publicUrl: string): Array<string> {
	const url = new URL(publicUrl)
	const origins = [url.origin]
	const twin = url.hostname === 'localhost' ? '127.0.0.1' : url.hostname === '127.0.0.1' ? 'localhost' : null
	if (twin) origins.push(`${url.protocol}//${twin}${url.port ? `:${url.port}` : ''}`)
	return origins
}

function originOf(value: string): string | null {
	try {
		const url = new URL(value)
		return url.protocol === 'http:' || url.protocol === 'https:' ? url.origin : null
	} catch {
		return null
	}
}
