/**
 * Display thinning keeps every band a drawn line could show: peaks and troughs survive, the result is bounded,
 * ordered, a subset of the input, and reaches the edges of the requested window.
 */
import fc from 'fast-check'
import { expect, test } from 'vitest'
import { bucketSpan, nearestIndex, thinForDisplay, windowIndices } from '#shared/spectra/thin.ts'
import { synthesise, type SyntheticBand } from '#tests/unit/spectra/synthetic.ts'

/** Invented band list for a 50,001-point spectrum: narrow and broad bands, two of them 12 cm⁻¹ apart. */
const BANDS: Array<SyntheticBand> = [
	{ position: 3350, height: 0.45, fwhm: 180 },
	{ position: 2955, height: 0.3, fwhm: 18 },
	{ position: 2920, height: 0.55, fwhm: 14 },
	{ position: 2850, height: 0.4, fwhm: 12 },
	{ position: 1738, height: 1.2, fwhm: 16 },
	{ position: 1650, height: 0.8, fwhm: 22 },
	{ position: 1600, height: 0.35, fwhm: 6 },
	{ position: 1588, height: 0.3, fwhm: 6 },
	{ position: 1452, height: 0.5, fwhm: 10 },
	{ position: 1375, height: 0.42, fwhm: 8 },
	{ position: 1240, height: 0.9, fwhm: 30 },
	{ position: 1160, height: 0.6, fwhm: 14 },
	{ position: 1050, height: 1.0, fwhm: 40 },
	{ position: 880, height: 0.25, fwhm: 5 },
	{ position: 760, height: 0.5, fwhm: 9 },
	{ position: 698, height: 0.7, fwhm: 7 },
	{ position: 520, height: 0.3, fwhm: 20 },
]

/** Noise σ in absorbance; the prominence threshold below is 20σ, so noise wiggles are not counted as bands. */
const NOISE = 0.002

function spectrum50k() {
	return synthesise(BANDS, { from: 400, to: 4000, step: 3600 / 50_000, noise: NOISE, seed: 7, baseline: { a: 0.05 } })
}

/** Indices of local maxima whose topographic prominence is at least `minProminence` (plateaus count once). */
function prominentMaxima(y: ArrayLike<number>, minProminence: number): Array<number> {
	const found: Array<number> = []
	for (let i = 1; i < y.length - 1; i++) {
		const v = y[i]!
		if (!(v > y[i - 1]! && v >= y[i + 1]!)) continue
		let leftMin = v
		let j = i - 1
		for (; j >= 0 && y[j]! <= v; j--) leftMin = Math.min(leftMin, y[j]!)
		let rightMin = v
		let k = i + 1
		for (; k < y.length && y[k]! <= v; k++) rightMin = Math.min(rightMin, y[k]!)
		// The base is the higher of the two sides' lowest points; an edge reached without a higher point still counts.
		const prominence = v - Math.max(leftMin, rightMin)
		if (prominence >= minProminence) found.push(i)
	}
	return found
}

function keptSet(xs: Array<number>) {
	return new Set(xs)
}

test('every band maximum and every trough above a prominence survives thinning 50,001 points to 2000', () => {
	const { x, y } = spectrum50k()
	const thinned = thinForDisplay(x, y, { maxPoints: 2000 })
	expect(thinned.x.length).toBeLessThanOrEqual(2000)
	const kept = keptSet(thinned.x)
	const maxima = prominentMaxima(y, 20 * NOISE)
	// Every invented band is found once in the full data (the test would prove nothing otherwise).
	expect(maxima.length).toBe(BANDS.length)
	for (const i of maxima) expect(kept.has(x[i]!), `band maximum at ${x[i]!.toFixed(2)} cm⁻¹`).toBe(true)
	const minima = prominentMaxima(
		y.map((v) => -v),
		20 * NOISE,
	)
	expect(minima.length).toBeGreaterThan(5)
	for (const i of minima) expect(kept.has(x[i]!), `trough at ${x[i]!.toFixed(2)} cm⁻¹`).toBe(true)
})

test('a zoomed window comes back at full detail and reaches both edges', () => {
	const { x, y } = spectrum50k()
	const thinned = thinForDisplay(x, y, { maxPoints: 4000, from: 1620, to: 1570 })
	const [start, end] = windowIndices(x, 1570, 1620)
	expect(thinned.x.length).toBe(end - start + 1)
	expect(thinned.x.length).toBeLessThanOrEqual(4000)
	expect(thinned.x[0]!).toBeLessThan(1570)
	expect(thinned.x[1]!).toBeGreaterThanOrEqual(1570)
	expect(thinned.x.at(-1)!).toBeGreaterThan(1620)
	expect(thinned.x.at(-2)!).toBeLessThanOrEqual(1620)
	// Both close bands (1600 and 1588 cm⁻¹) are separate maxima in the zoomed view.
	const local = prominentMaxima(thinned.y, 20 * NOISE).map((i) => thinned.x[i]!)
	expect(local.some((v) => Math.abs(v - 1600) < 0.5)).toBe(true)
	expect(local.some((v) => Math.abs(v - 1588) < 0.5)).toBe(true)
})

test('short input is returned whole, descending input keeps its order, and bad arguments are refused', () => {
	expect(thinForDisplay([1, 2, 3], [5, 6, 7], { maxPoints: 10 })).toEqual({ x: [1, 2, 3], y: [5, 6, 7] })
	const x = Array.from({ length: 1000 }, (_, i) => 4000 - i * 3.6)
	const y = x.map((v) => Math.sin(v / 40))
	const thinned = thinForDisplay(x, y, { maxPoints: 100, from: 1000, to: 3000 })
	for (let i = 1; i < thinned.x.length; i++) expect(thinned.x[i]!).toBeLessThan(thinned.x[i - 1]!)
	expect(thinned.x[0]!).toBeGreaterThan(3000)
	expect(thinned.x.at(-1)!).toBeLessThan(1000)
	expect(thinForDisplay([], [], { maxPoints: 10 })).toEqual({ x: [], y: [] })
	expect(() => thinForDisplay([1, 2], [1], { maxPoints: 10 })).toThrow(RangeError)
	expect(() => thinForDisplay([1, 2], [1, 2], { maxPoints: 1 })).toThrow(RangeError)
	expect(thinForDisplay([1, 2, 3, 4, 5], [0, 9, 0, 9, 0], { maxPoints: 3 }).x).toEqual([1, 5])
})

test('the window is widened by one point on each side and clamped to the data', () => {
	const x = [400, 500, 600, 700, 800]
	expect(windowIndices(x, 550, 650)).toEqual([1, 3])
	expect(windowIndices(x, 500, 700)).toEqual([0, 4])
	expect(windowIndices(x, 610, 620)).toEqual([2, 3])
	expect(windowIndices(x, 900, 1000)).toEqual([4, 4])
	expect(windowIndices(x, 100, 200)).toEqual([0, 0])
	expect(windowIndices([...x].reverse(), 550, 650)).toEqual([1, 3])
	expect(windowIndices(x)).toEqual([0, 4])
})

const seriesArb = fc
	.record({
		length: fc.integer({ min: 2, max: 3000 }),
		step: fc.double({ min: 0.01, max: 10, noNaN: true }),
		descending: fc.boolean(),
		values: fc.array(fc.integer({ min: -5000, max: 5000 }), { minLength: 2, maxLength: 3000 }),
	})
	.map(({ length, step, descending, values }) => {
		const n = Math.min(length, values.length)
		const x = Array.from({ length: n }, (_, i) => (descending ? 4000 - i * step : 400 + i * step))
		const y = values.slice(0, n).map((v) => v / 1000)
		return { x, y }
	})

const windowArb = fc.option(
	fc.tuple(fc.double({ min: 0, max: 35_000, noNaN: true }), fc.double({ min: 0, max: 35_000, noNaN: true })),
	{
		nil: undefined,
	},
)

test('property: bounded, ordered subset with the window ends, and every local extreme wider than a bucket kept', () => {
	fc.assert(
		fc.property(seriesArb, fc.integer({ min: 2, max: 600 }), windowArb, ({ x, y }, maxPoints, window) => {
			const [from, to] = window ?? [undefined, undefined]
			const out = thinForDisplay(x, y, { maxPoints, from, to })
			const [start, end] = windowIndices(x, from, to)
			expect(out.x.length).toBeLessThanOrEqual(maxPoints)
			expect(out.x.length).toBe(out.y.length)
			expect(out.x[0]).toBe(x[start])
			expect(out.x.at(-1)).toBe(x[end])
			const indexOf = new Map(x.map((v, i) => [v, i]))
			let previous = start - 1
			for (let k = 0; k < out.x.length; k++) {
				const i = indexOf.get(out.x[k]!)!
				expect(i).toBeGreaterThan(previous)
				expect(out.y[k]).toBe(y[i])
				previous = i
			}
			const span = bucketSpan(end - start + 1, maxPoints)
			if (!Number.isFinite(span)) return
			const kept = keptSet(out.x)
			for (let i = start + 1; i < end; i++) {
				let isMax = true
				let isMin = true
				for (let j = Math.max(start + 1, i - span); j <= Math.min(end - 1, i + span); j++) {
					if (j === i) continue
					if (y[j]! >= y[i]!) isMax = false
					if (y[j]! <= y[i]!) isMin = false
				}
				if (isMax || isMin) expect(kept.has(x[i]!)).toBe(true)
			}
		}),
		{ numRuns: 300 },
	)
})

test('property: thinning absorbance keeps the same points as thinning the transmittance it converts to', () => {
	fc.assert(
		fc.property(seriesArb, fc.integer({ min: 2, max: 400 }), ({ x, y }, maxPoints) => {
			const absorbance = y
			const transmittance = absorbance.map((a) => 100 * 10 ** -a)
			expect(thinForDisplay(x, transmittance, { maxPoints }).x).toEqual(thinForDisplay(x, absorbance, { maxPoints }).x)
		}),
		{ numRuns: 200 },
	)
})

test('property: nearestIndex agrees with a linear scan on ascending and descending axes', () => {
	fc.assert(
		fc.property(seriesArb, fc.double({ min: 0, max: 35_000, noNaN: true }), ({ x }, value) => {
			let best = 0
			for (let i = 1; i < x.length; i++) if (Math.abs(x[i]! - value) < Math.abs(x[best]! - value)) best = i
			expect(Math.abs(x[nearestIndex(x, value)]! - value)).toBe(Math.abs(x[best]! - value))
		}),
	)
	expect(nearestIndex([], 5)).toBe(-1)
})
