import { createContext, useContext } from 'react'

const NonceContext = createContext<string | undefined>(undefined)

/** Provided by entry.server.tsx around the whole app with this response's Content-Security-Policy nonce. */
export const NonceProvider = NonceContext.Provider

/**
 * The CSP nonce for inline scripts (`<Scripts>`, `<ScrollRestoration>`). On the server it comes from entry.server; in
 * the browser it is read back from a script the server sent (browsers hide the attribute's value but keep the
 * element's `nonce` property), so hydration renders the same value and nothing mismatches.
 */
export function useNonce(): string | undefined {
	const fromServer = useContext(NonceContext)
	if (fromServer !== undefined || typeof document === 'undefined') return fromServer
	return document.querySelector<HTMLScriptElement>('script[nonce]')?.nonce || undefined
}
