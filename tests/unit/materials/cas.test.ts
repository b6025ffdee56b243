import fc from 'fast-check'
import { expect, test } from 'vitest'
import { casCheckDigit, checkCasNumber } from '#shared/materials/cas.ts'

// The check-digit method and its worked example for water, 7732-18-5, are published by CAS on its
// "CAS Registry Number" check-digit page: (8×1 + 1×2 + 2×3 + 3×4 + 7×5 + 7×6) = 105, 105 mod 10 = 5.
// Cited from memory of that page; the arithmetic is checked here.
test('[CAS-001] the published worked example for water gives check digit 5', () => {
	expect(casCheckDigit('773218')).toBe(5)
	expect(checkCasNumber('7732-18-5')).toEqual({ valid: true, normalized: '7732-18-5' })
})

// Registry numbers of common pharmacopoeial substances (from memory of supplier catalogues and the
// pharmacopoeial monographs; each is confirmed here only by its own check digit).
test.each([
	['50-78-2', 'acetylsalicylic acid'],
	['103-90-2', 'paracetamol'],
	['58-08-2', 'caffeine'],
	['64044-51-5', 'lactose monohydrate'],
	['9004-34-6', 'cellulose'],
	['141-78-6', 'ethyl acetate'],
	['67-63-0', '2-propanol'],
	['108-88-3', 'toluene'],
])('[CAS-002] %s (%s) passes the check', (cas) => {
	expect(checkCasNumber(cas).valid).toBe(true)
})

test('[CAS-003] a wrong check digit is refused and the expected digit is named', () => {
	expect(checkCasNumber('50-78-3')).toEqual({ valid: false, reason: 'check-digit', expectedCheckDigit: 2 })
})

test.each(['5-78-2', '50-7-2', '50782', '050-78-2', '12345678-12-1', '50-78-X', ''])(
	'[CAS-004] malformed %j is refused as a format error',
	(cas) => {
		expect(checkCasNumber(cas)).toMatchObject({ valid: false, reason: 'format' })
	},
)

test('[CAS-005] property: exactly one of the ten final digits is valid for any registry stem', () => {
	fc.assert(
		fc.property(fc.integer({ min: 10, max: 9_999_999 }), fc.integer({ min: 0, max: 99 }), (first, middle) => {
			const stem = `${first}-${String(middle).padStart(2, '0')}`
			const valid = Array.from({ length: 10 }, (_, digit) => checkCasNumber(`${stem}-${digit}`).valid)
			return valid.filter(Boolean).length === 1
		}),
	)
})
