import { expect, test } from 'vitest'
import {
	createRateLimiter,
	enforceRateLimit,
	retryAfterSeconds,
	slideWindow,
} from '#app/.server/security/rate-limit.ts'

const TEN_A_MINUTE = { max: 10, windowMs: 60_000 }

/** Runs `count` hits through the pure window, `everyMs` apart from `start`; returns the kept hits and decisions. */
function hitsAt(count: number, start: number, everyMs: number) {
	let hits: Array<number> = []
	const decisions = []
	for (let n = 0; n < count; n++) {
		const step = slideWindow(hits, TEN_A_MINUTE, start + n * everyMs)
		hits = step.hits
		decisions.push(step.decision)
	}
	return { hits, decisions }
}

test('[SEC-001] ten hits in a minute are allowed with a falling remainder; the eleventh is refused until the first ages out', () => {
	const { hits, decisions } = hitsAt(10, 0, 1_000)
	expect(decisions.map((decision) => decision.allowed)).toEqual(Array(10).fill(true))
	expect(decisions.map((decision) => (decision.allowed ? decision.remaining : -1))).toEqual([
		9, 8, 7, 6, 5, 4, 3, 2, 1, 0,
	])
	const eleventh = slideWindow(hits, TEN_A_MINUTE, 10_000)
	expect(eleventh.decision).toEqual({ allowed: false, remaining: 0, retryAfterMs: 50_000, resetMs: 50_000 })
	// A refused hit is not counted.
	expect(eleventh.hits).toEqual(hits)
	// One millisecond before the first hit leaves the window: still refused; at that moment: allowed.
	expect(slideWindow(hits, TEN_A_MINUTE, 59_999).decision.allowed).toBe(false)
	expect(slideWindow(hits, TEN_A_MINUTE, 60_000).decision).toMatchObject({ allowed: true, remaining: 0 })
})

test('[SEC-002] the window slides: no burst of twice the limit around a boundary, as a fixed window would allow', () => {
	// Ten hits in the last second of one minute…
	const { hits } = hitsAt(10, 59_000, 100)
	// …and none more in the first seconds of the next: the hits are still inside the last 60 s.
	expect(slideWindow(hits, TEN_A_MINUTE, 60_500).decision).toMatchObject({ allowed: false, retryAfterMs: 58_500 })
	// Hits older than the window are dropped from what is kept.
	expect(slideWindow([1, 2, 3], TEN_A_MINUTE, 120_000).hits).toEqual([120_000])
})

test('[SEC-003] Retry-After is whole seconds, rounded up and at least 1', () => {
	expect(retryAfterSeconds(50_000)).toBe(50)
	expect(retryAfterSeconds(49_001)).toBe(50)
	expect(retryAfterSeconds(1)).toBe(1)
	expect(retryAfterSeconds(0)).toBe(1)
})

test('[SEC-004] a rule without a positive max and window is a programming error', () => {
	expect(() => slideWindow([], { max: 0, windowMs: 1_000 }, 0)).toThrow(RangeError)
	expect(() => slideWindow([], { max: 1.5, windowMs: 1_000 }, 0)).toThrow(RangeError)
	expect(() => slideWindow([], { max: 1, windowMs: 0 }, 0)).toThrow(RangeError)
})

test('[SEC-005] the in-memory limiter keeps keys apart, gives a hit back on release and forgets a key on reset', () => {
	const limiter = createRateLimiter()
	const rule = { max: 2, windowMs: 1_000 }
	expect(limiter.limit('a', rule, 0).allowed).toBe(true)
	expect(limiter.limit('a', rule, 1).allowed).toBe(true)
	expect(limiter.limit('a', rule, 2).allowed).toBe(false)
	expect(limiter.limit('b', rule, 2).allowed).toBe(true)
	limiter.release('a')
	expect(limiter.limit('a', rule, 3).allowed).toBe(true)
	expect(limiter.limit('a', rule, 4).allowed).toBe(false)
	limiter.reset('a')
	expect(limiter.limit('a', rule, 5)).toMatchObject({ allowed: true, remaining: 1 })
	// Releasing a key it does not hold is harmless.
	limiter.release('never-seen')
	expect(limiter.size()).toBe(2)
})

test('[SEC-006] the limiter holds at most maxKeys keys, dropping expired ones first, then the least recently used', () => {
	const limiter = createRateLimiter({ maxKeys: 3 })
	const rule = { max: 1, windowMs: 1_000 }
	limiter.limit('old', rule, 0)
	limiter.limit('x', rule, 5_000)
	limiter.limit('y', rule, 5_001)
	limiter.limit('z', rule, 5_002)
	// 'old' expired long ago and went first.
	expect(limiter.size()).toBe(3)
	expect(limiter.limit('old', rule, 5_003).allowed).toBe(true)
	// Now 'x' was the least recently used of four live keys, so it was dropped and may hit again.
	expect(limiter.size()).toBe(3)
	expect(limiter.limit('y', rule, 5_004).allowed).toBe(false)
	expect(limiter.limit('x', rule, 5_005).allowed).toBe(true)
})

test('[SEC-007] enforceRateLimit throws 429 with Retry-After and the message when the rule refuses', () => {
	const limiter = createRateLimiter()
	const rule = { max: 1, windowMs: 30_000 }
	const message = (seconds: number) => `Slow down for ${seconds} s`
	expect(enforceRateLimit(limiter, 'api:key-1', rule, 0, message)).toMatchObject({ allowed: true, remaining: 0 })
	try {
		enforceRateLimit(limiter, 'api:key-1', rule, 10_000, message)
		expect.unreachable('the second hit should be refused')
	} catch (thrown) {
		expect(thrown).toMatchObject({
			data: { message: 'Slow down for 20 s' },
			init: { status: 429, headers: { 'Retry-After': '20' } },
		})
	}
})
