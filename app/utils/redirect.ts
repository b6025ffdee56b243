/** A same-site path to go to after sign-in; anything else (absolute or protocol-relative URLs) becomes '/'. */
export function safeRedirectPath(candidate: string | null | undefined): string {
	if (!candidate || !candidate.startsWith('/') || candidate.startsWith('//') || candidate.startsWith('/\\')) return '/'
	return candidate
}
