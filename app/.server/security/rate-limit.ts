import { data } from 'react-router'

/**
 * A sliding-window rate limiter, reusable for any key: sign-in attempts today, API keys and addresses on /api/v1
 * later.
 *
 * Each key keeps the times of its counted hits inside the last window (a sliding log). That is exact (no burst of
 * twice the limit at a window boundary, as fixed windows allow) and small, because limits are tens to a few hundred
 * hits per window.
 *
 * The store lives in this process's memory. With several app servers behind a load balancer each would count on its
 * own, so a client could make the limit times the number of servers: they then need a shared store, such as a
 * PostgreSQL table of (key, hit time) pruned by the window, or one row per (key, window start) counted with
 * INSERT … ON CONFLICT DO UPDATE.
 */

/** At most `max` hits in any `windowMs` milliseconds. */
export type RateLimitRule = { max: number; windowMs: number }

export type RateLimitDecision =
	| {
			allowed: true
			/** Hits still allowed in the window after this one. */
			remaining: number
			/** Milliseconds until the oldest counted hit leaves the window. */
			resetMs: number
	  }
	| {
			allowed: false
			remaining: 0
			/** Milliseconds until one more hit would be allowed. */
			retryAfterMs: number
			resetMs: number
	  }

/**
 * The decision for one more hit at `now`, given the earlier hit times in ascending order, and the hit times to keep
 * (the ones still inside the window, plus `now` when the hit is allowed). A refused hit is not counted, so a client
 * that keeps knocking is let in again as soon as its earlier hits age out. Pure.
 */
export function slideWindow(
	hits: ReadonlyArray<number>,
	rule: RateLimitRule,
	now: number,
): { decision: RateLimitDecision; hits: Array<number> } {
	assertRule(rule)
	const recent = hits.filter((time) => time > now - rule.windowMs)
	if (recent.length >= rule.max) {
		// The next hit fits once all but max - 1 of the recent hits have left the window.
		const freeing = recent[recent.length - rule.max]!
		const retryAfterMs = freeing + rule.windowMs - now
		return {
			decision: { allowed: false, remaining: 0, retryAfterMs, resetMs: recent[0]! + rule.windowMs - now },
			hits: recent,
		}
	}
	recent.push(now)
	return {
		decision: { allowed: true, remaining: rule.max - recent.length, resetMs: recent[0]! + rule.windowMs - now },
		hits: recent,
	}
}

/** Whole seconds for a Retry-After header: rounded up, and never 0 (which would invite an immediate retry). */
export function retryAfterSeconds(milliseconds: number): number {
	return Math.max(1, Math.ceil(milliseconds / 1000))
}

function assertRule(rule: RateLimitRule): void {
	if (!Number.isInteger(rule.max) || rule.max < 1) throw new RangeError(`A rate limit needs max ≥ 1, not ${rule.max}`)
	if (!(rule.windowMs > 0)) throw new RangeError(`A rate limit needs a positive window, not ${rule.windowMs} ms`)
}

export type RateLimiter = {
	/** Counts one hit for `key` at `now` (milliseconds since the epoch) unless the rule refuses it. */
	limit(key: string, rule: RateLimitRule, now: number): RateLimitDecision
	/** Takes back the newest hit of `key`, e.g. for an attempt that turned out to be legitimate. */
	release(key: string): void
	/** Forgets `key` altogether. */
	reset(key: string): void
	/** Keys held (for tests and monitoring). */
	size(): number
}

type Entry = { hits: Array<number>; windowMs: number }

/**
 * An in-memory store of sliding logs. At most `maxKeys` keys are held: past that the least recently used are
 * dropped, so a flood of made-up keys costs a bounded amount of memory (it can only forget older clients early).
 */
export function createRateLimiter({ maxKeys = 50_000 }: { maxKeys?: number } = {}): RateLimiter {
	const entries = new Map<string, Entry>()
	let callsSinceSweep = 0

	function sweep(now: number) {
		for (const [key, entry] of entries) {
			const newest = entry.hits.at(-1)
			if (newest === undefined || newest <= now - entry.windowMs) entries.delete(key)
		}
	}

	return {
		limit(key, rule, now) {
			const previous = entries.get(key)
			const { decision, hits } = slideWindow(previous?.hits ?? [], rule, now)
			// Delete and set again: the Map's order is then least recently used first.
			entries.delete(key)
			if (hits.length > 0) entries.set(key, { hits, windowMs: rule.windowMs })
			if (++callsSinceSweep >= 1_000 || entries.size > maxKeys) {
				callsSinceSweep = 0
				sweep(now)
				for (const oldest of entries.keys()) {
					if (entries.size <= maxKeys) break
					entries.delete(oldest)
				}
			}
			return decision
		},
		release(key) {
			const entry = entries.get(key)
			if (!entry) return
			entry.hits.pop()
			if (entry.hits.length === 0) entries.delete(key)
		},
		reset(key) {
			entries.delete(key)
		},
		size() {
			return entries.size
		},
	}
}

/**
 * For routes (and the coming /api/v1): counts one hit and, when the rule refuses it, throws 429 Too Many Requests
 * with Retry-After and the message. Returns the decision when allowed, e.g. to send RateLimit headers.
 */
export function enforceRateLimit(
	limiter: RateLimiter,
	key: string,
	rule: RateLimitRule,
	now: number,
	message: (seconds: number) => string,
): RateLimitDecision & { allowed: true } {
	const decision = limiter.limit(key, rule, now)
	if (!decision.allowed) {
		const seconds = retryAfterSeconds(decision.retryAfterMs)
		throw data({ message: message(seconds) }, { status: 429, headers: { 'Retry-After': String(seconds) } })
	}
	return decision
}
