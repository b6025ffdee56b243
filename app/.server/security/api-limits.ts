import { env } from '#app/.server/env.ts'
import {
	createRateLimiter,
	type RateLimitDecision,
	type RateLimiter,
	type RateLimitRule,
	retryAfterSeconds,
} from '#app/.server/security/rate-limit.ts'

/**
 * Rate limits of the REST API (/api/v1), counted by `apiRoute()` (app/.server/api.ts):
 *
 * - every request with a valid API key counts against that key (API_RATE_LIMIT_PER_KEY a window), whatever its
 *   scope or outcome, so one runaway script cannot crowd out the lab's other clients;
 * - a request without a valid key (none, unknown, revoked, deactivated owner) counts against its client address
 *   (API_RATE_LIMIT_PER_ADDRESS), which slows a client trying keys. As for sign-in, the address comes from the
 *   reverse proxy's X-Forwarded-For; without it the address is unknown and that limit is skipped rather than shared
 *   by every client (see client-address.ts).
 *
 * A refused request is not counted and reaches nothing else: no key lookup is written, no handler runs.
 */

export type ApiLimitPolicy = 'per-key' | 'per-address'

export type ApiLimitOutcome = {
	policy: ApiLimitPolicy
	rule: RateLimitRule
	decision: RateLimitDecision
}

/** The two rules, read from the environment (zod-validated in env.ts). */
export function apiRateLimitRules(): Record<ApiLimitPolicy, RateLimitRule> {
	const settings = env()
	const windowMs = settings.API_RATE_LIMIT_WINDOW_SECONDS * 1000
	return {
		'per-key': { max: settings.API_RATE_LIMIT_PER_KEY, windowMs },
		'per-address': { max: settings.API_RATE_LIMIT_PER_ADDRESS, windowMs },
	}
}

const limiter: RateLimiter = createRateLimiter()

/** Counts one API request for a key id or a client address at `now` (ms), unless its window is used up. */
export function takeApiRequest(
	subject: { keyId: string } | { address: string },
	now: number,
	rules: Record<ApiLimitPolicy, RateLimitRule> = apiRateLimitRules(),
): ApiLimitOutcome {
	const policy: ApiLimitPolicy = 'keyId' in subject ? 'per-key' : 'per-address'
	const key = 'keyId' in subject ? `api:key:${subject.keyId}` : `api:address:${subject.address}`
	const rule = rules[policy]
	return { policy, rule, decision: limiter.limit(key, rule, now) }
}

/**
 * The rate-limit header fields of draft-ietf-httpapi-ratelimit-headers-10 (IETF HTTPAPI working group, an
 * Internet-Draft, work in progress): `RateLimit-Policy: "<name>";q=<quota>;w=<window seconds>` and
 * `RateLimit: "<name>";r=<remaining>;t=<seconds until quota is freed>`, both Structured Field lists (RFC 9651)
 * whose item is the policy name as a String. A refusal adds Retry-After (RFC 9110 §10.2.3): whole seconds until one
 * more request fits. With a sliding window, `t` is the time until the oldest counted request leaves it. Pure.
 */
export function rateLimitHeaders(outcome: ApiLimitOutcome): Array<[string, string]> {
	const { policy, rule, decision } = outcome
	const headers: Array<[string, string]> = [
		['RateLimit-Policy', `"${policy}";q=${rule.max};w=${Math.ceil(rule.windowMs / 1000)}`],
		['RateLimit', `"${policy}";r=${decision.remaining};t=${Math.max(0, Math.ceil(decision.resetMs / 1000))}`],
	]
	if (!decision.allowed) headers.push(['Retry-After', String(retryAfterSeconds(decision.retryAfterMs))])
	return headers
}

/** The sentence of a 429 answer. */
export function apiLimitMessage(outcome: ApiLimitOutcome & { decision: { allowed: false } }): string {
	const seconds = retryAfterSeconds(outcome.decision.retryAfterMs)
	const windowSeconds = Math.ceil(outcome.rule.windowMs / 1000)
	const whose = outcome.policy === 'per-key' ? 'this API key' : 'requests without a valid API key from your address'
	return `Too many requests for ${whose}: at most ${outcome.rule.max} in ${windowSeconds} seconds. Wait ${
		seconds === 1 ? 'a second' : `${seconds} seconds`
	} and try again.`
}
