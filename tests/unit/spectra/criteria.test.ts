import { expect, test } from 'vitest'

import {
	AcceptanceCriteriaSchema,
	bandTolerance,
	DEFAULT_RANGE,
	PH_EUR_BAND_TOLERANCE_PERCENT,
} from '#shared/spectra/criteria.ts'

test('defaults: CO₂ excluded, 4000–650 cm⁻¹, no baseline correction, derivative criterion off', () => {
	// Range: BP 2012 Appendix II A "recorded over 4000–650 cm⁻¹" (FACTS.md §2.2 [READ]); CO₂ 2400–2280 (issue 3 item 2).
	const criteria = AcceptanceCriteriaSchema.parse({ minCorrelation: 0.98 })
	expect(criteria.range).toEqual(DEFAULT_RANGE)
	expect(criteria.exclusionRegions).toEqual([{ from: 2280, to: 2400, label: 'atmospheric CO₂' }])
	expect(criteria.baseline).toEqual({ method: 'none' })
	expect(criteria.minDerivativeCorrelation).toBeNull()
	expect(criteria.bands).toEqual([])
})

test('band tolerance falls back to the criteria default, then to Ph. Eur. 0.5 % of the position', () => {
	// FACTS.md §1.1: "within 0.5 % of the wavenumber scale" [READ-2°]; ±5 cm⁻¹ at 1000 cm⁻¹ [DERIVED].
	expect(PH_EUR_BAND_TOLERANCE_PERCENT).toBe(0.5)
	expect(bandTolerance({ position: 1000 }, null)).toBeCloseTo(5, 12)
	expect(bandTolerance({ position: 3000 }, null)).toBeCloseTo(15, 12)
	expect(bandTolerance({ position: 1000 }, 2)).toBe(2)
	expect(bandTolerance({ position: 1000, tolerance: 1 }, 2)).toBe(1)
})

test('invalid criteria are refused with readable issues', () => {
	expect(AcceptanceCriteriaSchema.safeParse({ minCorrelation: 1.5 }).success).toBe(false)
	expect(AcceptanceCriteriaSchema.safeParse({ minCorrelation: 0.9, range: { from: 4000, to: 650 } }).success).toBe(
		false,
	)
	expect(
		AcceptanceCriteriaSchema.safeParse({ minCorrelation: 0.9, bands: [{ position: 1700, tolerance: -1 }] }).success,
	).toBe(false)
	expect(AcceptanceCriteriaSchema.safeParse({ minCorrelation: 0.9, unknownField: 1 }).success).toBe(false)
	const parsed = AcceptanceCriteriaSchema.parse({
		minCorrelation: 0.95,
		bands: [{ position: 1715, assignment: ' C=O ' }],
	})
	expect(parsed.bands[0]).toEqual({ position: 1715, assignment: 'C=O', required: true })
})
