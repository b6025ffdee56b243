import fc from 'fast-check'
import { expect, test } from 'vitest'

import { type CheckSummary, checkValidUntil, instrumentReadiness } from '#shared/runs/instrument-readiness.ts'

// Sources:
// - The wavenumber scale is checked with a polystyrene film before use (Ph. Eur. 2.2.24, FACTS.md §1.1, READ-2°).
// - A check is valid for a set period, after which the instrument must be re-checked, and a failed or expired check
//   blocks routine use: common practice, no source (the period is the lab's own, set per instrument).
// - The validity ends at validUntil itself: at that instant the instrument is no longer usable (product rule,
//   common practice, no source).
const PH_EUR = 'Ph. Eur. 2.2.24 (FACTS.md §1.1, READ-2°)'
const PRACTICE = 'common practice, no source'

const DAY = 86_400_000
const PERFORMED = new Date('2026-03-02T08:30:00Z')
const VALID_UNTIL = new Date('2026-04-01T08:30:00Z')
const INSTRUMENT = { code: 'IR-02', retiredAt: null }

function check(overrides: Partial<CheckSummary> = {}): CheckSummary {
	return { id: 'check-1', passed: true, performedAt: PERFORMED, validUntil: VALID_UNTIL, ...overrides }
}

test(`an instrument never checked cannot be used, and the message says to record a passing check — ${PH_EUR}`, () => {
	const readiness = instrumentReadiness(INSTRUMENT, null, new Date('2026-03-03T00:00:00Z'))
	expect(readiness).toEqual({
		usable: false,
		reason: 'never-checked',
		check: null,
		message: 'IR-02 has no polystyrene check on record. Record a passing check before using it for identity runs.',
	})
})

test(`a failed last check blocks use even inside its period, and names the day and what to do — ${PRACTICE}`, () => {
	const failed = check({ passed: false })
	const readiness = instrumentReadiness(INSTRUMENT, failed, new Date('2026-03-02T09:00:00Z'))
	expect(readiness.usable).toBe(false)
	if (readiness.usable) return
	expect(readiness.reason).toBe('failed')
	expect(readiness.check).toBe(failed)
	expect(readiness.message).toBe(
		'The last polystyrene check of IR-02 (2026-03-02) failed. Have the instrument serviced or re-checked and record a passing check before using it.',
	)
})

test(`the validity ends exactly at validUntil: usable 1 ms before, expired at the instant and after — ${PRACTICE}`, () => {
	const before = instrumentReadiness(INSTRUMENT, check(), new Date(VALID_UNTIL.getTime() - 1))
	expect(before.usable).toBe(true)
	expect(before.message).toBe('Check passed on 2026-03-02, valid until 2026-04-01.')
	for (const now of [VALID_UNTIL, new Date(VALID_UNTIL.getTime() + 1), new Date(VALID_UNTIL.getTime() + 90 * DAY)]) {
		const readiness = instrumentReadiness(INSTRUMENT, check(), now)
		expect(readiness).toMatchObject({ usable: false, reason: 'expired' })
		expect(readiness.message).toBe(
			'The polystyrene check of IR-02 expired on 2026-04-01. Record a new check before using it for identity runs.',
		)
	}
})

test(`a retired instrument cannot be used from its retirement on, whatever its checks say — ${PRACTICE}`, () => {
	const retiredAt = new Date('2026-03-10T12:00:00Z')
	const retired = { code: 'IR-01', retiredAt }
	expect(instrumentReadiness(retired, check(), new Date(retiredAt.getTime() - 1)).usable).toBe(true)
	const readiness = instrumentReadiness(retired, check(), retiredAt)
	expect(readiness).toMatchObject({ usable: false, reason: 'retired' })
	expect(readiness.message).toBe('IR-01 is retired and cannot be used for identity runs. Choose another instrument.')
	// Retirement is reported before the check's own problems.
	expect(instrumentReadiness(retired, null, retiredAt)).toMatchObject({ reason: 'retired', check: null })
	expect(instrumentReadiness(retired, check({ passed: false }), retiredAt)).toMatchObject({ reason: 'retired' })
})

test(`a failed check is reported as failed, not expired, once its period is over too — ${PRACTICE}`, () => {
	const readiness = instrumentReadiness(INSTRUMENT, check({ passed: false }), new Date(VALID_UNTIL.getTime() + DAY))
	expect(readiness).toMatchObject({ usable: false, reason: 'failed' })
})

test(`property: usable exactly when not retired, checked, passed and now < validUntil — ${PRACTICE}`, () => {
	const time = fc.integer({ min: Date.UTC(2020, 0, 1), max: Date.UTC(2030, 0, 1) }).map((ms) => new Date(ms))
	fc.assert(
		fc.property(
			fc.option(time),
			fc.option(fc.record({ passed: fc.boolean(), performedAt: time, validUntil: time })),
			time,
			(retiredAt, latest, now) => {
				const summary = latest ? { id: 'c', ...latest } : null
				const readiness = instrumentReadiness({ code: 'IR-09', retiredAt }, summary, now)
				const expected =
					!(retiredAt && retiredAt <= now) && summary !== null && summary.passed && now < summary.validUntil
				expect(readiness.usable).toBe(expected)
				expect(readiness.message.length).toBeGreaterThan(0)
			},
		),
	)
})

test(`checkValidUntil adds whole days of 24 h to the moment of the check — ${PRACTICE}`, () => {
	expect(checkValidUntil(PERFORMED, 30)).toEqual(VALID_UNTIL)
	expect(checkValidUntil(PERFORMED, 1)).toEqual(new Date('2026-03-03T08:30:00Z'))
	// A leap day inside the period counts as a day (2028 is a leap year: Gregorian calendar).
	expect(checkValidUntil(new Date('2028-02-28T00:00:00Z'), 2)).toEqual(new Date('2028-03-01T00:00:00Z'))
})
