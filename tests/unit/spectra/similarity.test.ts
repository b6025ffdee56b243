import fc from 'fast-check'
import { sampleCorrelation } from 'simple-statistics'
import { expect, test } from 'vitest'

import {
	cosineSimilarity,
	euclideanDistance,
	firstDifferenceCorrelation,
	GridMismatch,
	pearson,
} from '#shared/spectra/similarity.ts'

// FACTS.md §5.1 worked example [DERIVED from the §5.1 formulas, which are MEMORY-labelled standard mathematics].
const exampleX = [0.1, 0.5, 0.9, 0.4, 0.2, 0.8, 0.3]
const exampleY = [0.12, 0.48, 0.85, 0.45, 0.22, 0.75, 0.35]

test('Pearson r of the FACTS.md §5.1 worked example is 0.995582', () => {
	// Source: FACTS.md §5.1 worked example [DERIVED]; 6 decimals as printed there.
	expect(pearson(exampleX, exampleY)).toBeCloseTo(0.995582, 6)
})

test('cosine, unit-norm Euclidean distance and first-derivative r of the worked example', () => {
	// Source: FACTS.md §5.1 worked example [DERIVED]: c = 0.997437, d = 0.071591 (d² = 2 − 2c), first-derivative r = 0.996862.
	const c = cosineSimilarity(exampleX, exampleY)!
	const d = euclideanDistance(exampleX, exampleY)!
	expect(c).toBeCloseTo(0.997437, 6)
	expect(d).toBeCloseTo(0.071591, 6)
	expect(d * d).toBeCloseTo(2 - 2 * c, 12)
	expect(firstDifferenceCorrelation(exampleX, exampleY)).toBeCloseTo(0.996862, 6)
})

test('mean-centring matters: y = 2x + 5 gives r = 1 but c = 0.758384', () => {
	// Source: FACTS.md §5.1 "Mean-centring matters" [DERIVED].
	const x = [1, 2, 3, 3, 2, 1, 0, -1, -2, -3]
	const y = x.map((v) => 2 * v + 5)
	expect(pearson(x, y)).toBeCloseTo(1, 12)
	expect(cosineSimilarity(x, y)).toBeCloseTo(0.758384, 6)
})

const finite = fc.double({ min: -1e3, max: 1e3, noNaN: true, noDefaultInfinity: true })
const pairOfSeries = fc
	.integer({ min: 3, max: 200 })
	.chain((n) =>
		fc.tuple(fc.array(finite, { minLength: n, maxLength: n }), fc.array(finite, { minLength: n, maxLength: n })),
	)

test('Pearson equals simple-statistics sampleCorrelation to 1e-9', () => {
	// Source: the general-purpose statistics package simple-statistics (issue 3, item 10); no published spectra involved.
	fc.assert(
		fc.property(pairOfSeries, ([a, b]) => {
			const ours = pearson(a, b)
			const spreadA = Math.max(...a) - Math.min(...a)
			const spreadB = Math.max(...b) - Math.min(...b)
			fc.pre(spreadA > 1e-6 && spreadB > 1e-6 && ours !== null)
			expect(Math.abs(ours! - sampleCorrelation(a, b))).toBeLessThan(1e-9)
		}),
		{ numRuns: 300 },
	)
})

test('Pearson is symmetric, lies in [−1, 1] and ignores positive scaling and offsets', () => {
	// Common practice, no source: these are properties of the definition (FACTS.md §5.1, MEMORY-labelled formula).
	fc.assert(
		fc.property(
			pairOfSeries,
			fc.double({ min: 1e-3, max: 1e3, noNaN: true }),
			fc.double({ min: -1e3, max: 1e3, noNaN: true }),
			([a, b], scale, offset) => {
				fc.pre(Math.max(...a) - Math.min(...a) > 1e-6 && Math.max(...b) - Math.min(...b) > 1e-6)
				const r = pearson(a, b)
				if (r === null) return
				expect(pearson(b, a)).toBe(r)
				expect(r).toBeGreaterThanOrEqual(-1)
				expect(r).toBeLessThanOrEqual(1)
				const transformed = pearson(
					a.map((v) => v * scale + offset),
					b,
				)
				fc.pre(transformed !== null)
				expect(Math.abs(transformed! - r)).toBeLessThan(1e-6)
			},
		),
		{ numRuns: 300 },
	)
})

test('a flat input has no correlation and a mask selects the compared points', () => {
	expect(pearson([1, 1, 1, 1], [1, 2, 3, 4])).toBeNull()
	const mask = Uint8Array.from([1, 1, 1, 0])
	// Only the first three points count: they are perfectly correlated; the masked fourth would break it.
	expect(pearson([1, 2, 3, 100], [2, 4, 6, -50], mask)).toBeCloseTo(1, 12)
	expect(() => pearson([1, 2, 3], [1, 2])).toThrow(GridMismatch)
})
