import { expect, test } from 'vitest'

import { findExtraBands, matchBands, relativeIntensities } from '#shared/spectra/bands.ts'
import { BandSchema } from '#shared/spectra/criteria.ts'
import type { Peak } from '#shared/spectra/peaks.ts'

// Synthetic peak lists: no outside source.
function peak(position: number, intensity: number, width = 10): Peak {
	return {
		position,
		intensity,
		prominence: intensity,
		width,
		shape: width >= 60 ? 'broad' : 'sharp',
		index: 0,
		leftBase: position - 20,
		rightBase: position + 20,
	}
}

const reference = [peak(1000, 0.5), peak(1250, 0.9), peak(1715, 1.0), peak(3340, 0.4, 250)]
const sample = [peak(1001.2, 0.45), peak(1248, 0.95), peak(1719.5, 1.0), peak(3330, 0.35, 240), peak(2250, 0.3)]

test('each expected band gets the nearest sample peak within its tolerance, with shift and relative intensity', () => {
	const bands = [
		{ position: 1000, tolerance: 2, assignment: 'C–O' },
		{ position: 1715, tolerance: 2, assignment: 'C=O' },
		{ position: 3340, tolerance: 15, assignment: 'O–H', shape: 'broad' as const },
		{ position: 1250, tolerance: 5, shape: 'broad' as const },
	].map((b) => BandSchema.parse(b))
	const [co, carbonyl, oh, other] = matchBands(bands, sample, reference, {
		defaultTolerance: null,
		sampleFloor: 0,
		referenceFloor: 0,
	})
	expect(co).toMatchObject({ observed: 1001.2, withinTolerance: true, reference: 1000 })
	expect(co!.shift).toBeCloseTo(1.2, 12)
	expect(co!.relativeIntensity.sample).toBeCloseTo(0.45, 12)
	expect(co!.relativeIntensity.reference).toBeCloseTo(0.5, 12)
	expect(co!.relativeIntensity.difference).toBeCloseTo(-0.05, 12)
	expect(carbonyl).toMatchObject({ observed: null, shift: null, withinTolerance: false, reference: 1715 })
	expect(oh).toMatchObject({ withinTolerance: true, observedShape: 'broad', shapeMatches: true })
	expect(other).toMatchObject({ withinTolerance: true, shapeMatches: false })
})

test('relative intensities are heights above the floor over the strongest band', () => {
	const map = relativeIntensities([peak(1, 0.3), peak(2, 1.1)], 0.1)
	const values = [...map.values()]
	expect(values[0]).toBeCloseTo(0.2, 12)
	expect(values[1]).toBe(1)
})

test('strong sample peaks the reference lacks are extra bands; weak ones and excluded ones are not', () => {
	// ±3 cm⁻¹: the shifted C=O (4.5 away), the O–H (10 away) and the new 2250 band have no reference partner.
	const extras = findExtraBands(sample, reference, { tolerance: 3, minRelativeIntensity: 0.2, sampleFloor: 0 })
	expect(extras.map((e) => e.position)).toEqual([1719.5, 3330, 2250])
	expect(extras[0]!.nearestReference).toBe(1715)
	const filtered = findExtraBands(sample, reference, {
		tolerance: 3,
		minRelativeIntensity: 0.2,
		sampleFloor: 0,
		isIncluded: (position) => position < 2000,
	})
	expect(filtered.map((e) => e.position)).toEqual([1719.5])
	expect(
		findExtraBands(sample, reference, { tolerance: 3, minRelativeIntensity: 0.5, sampleFloor: 0 }).map(
			(e) => e.position,
		),
	).toEqual([1719.5])
	// With the Ph. Eur. 0.5 % window (tolerance null) every sample band has a partner except 2250.
	expect(
		findExtraBands(sample, reference, { tolerance: null, minRelativeIntensity: 0.2, sampleFloor: 0 }).map(
			(e) => e.position,
		),
	).toEqual([2250])
})
