import { forwardedClientAddress } from '#app/.server/security/client-address.ts'
import { createRateLimiter, type RateLimitRule, retryAfterSeconds } from '#app/.server/security/rate-limit.ts'

/**
 * Sign-in attempts from one client address: 10 a minute. Only failed attempts use it up (see `takeSignInAttempt`), so
 * a whole lab behind one NAT address does not come near it, while a password-guessing script is slowed to a crawl
 * (common practice, no source).
 */
export const SIGN_IN_LIMIT_PER_ADDRESS: RateLimitRule = { max: 10, windowMs: 60_000 }

/**
 * Sign-in attempts for one e-mail address, from anywhere: 10 a minute. Known accounts lock after
 * LOCKOUT_THRESHOLD wrong passwords anyway; this also covers addresses without an account and a locked account
 * being hammered (common practice, no source).
 */
export const SIGN_IN_LIMIT_PER_EMAIL: RateLimitRule = { max: 10, windowMs: 60_000 }

const limiter = createRateLimiter()

export type SignInAttemptDecision = { allowed: true } | { allowed: false; retryAfterSeconds: number; message: string }

function keysOf(email: string, headers: Headers | undefined): Array<[string, RateLimitRule]> {
	const address = forwardedClientAddress(headers)
	const keys: Array<[string, RateLimitRule]> = [
		[`sign-in:email:${email.trim().toLowerCase()}`, SIGN_IN_LIMIT_PER_EMAIL],
	]
	if (address) keys.unshift([`sign-in:address:${address}`, SIGN_IN_LIMIT_PER_ADDRESS])
	return keys
}

/**
 * Counts a sign-in attempt against its client address (when known) and its e-mail, or refuses it when either has
 * used up its window. Every attempt counts while it runs; a successful one is given back by `signInSucceeded`, so
 * in effect failures and refusals are what is limited, and people who sign in correctly are never held up.
 */
export function takeSignInAttempt(email: string, headers: Headers | undefined, now: number): SignInAttemptDecision {
	const taken: Array<string> = []
	for (const [key, rule] of keysOf(email, headers)) {
		const decision = limiter.limit(key, rule, now)
		if (!decision.allowed) {
			for (const earlier of taken) limiter.release(earlier)
			const seconds = retryAfterSeconds(decision.retryAfterMs)
			return {
				allowed: false,
				retryAfterSeconds: seconds,
				message: `Too many sign-in attempts. Wait ${seconds === 1 ? 'a second' : `${seconds} seconds`} and try again.`,
			}
		}
		taken.push(key)
	}
	return { allowed: true }
}

/** Gives back the attempt of a successful sign-in (see `takeSignInAttempt`). */
export function signInSucceeded(email: string, headers: Headers | undefined): void {
	for (const [key] of keysOf(email, headers)) limiter.release(key)
}
