import { expect, test } from 'vitest'

import {
	correctBaseline,
	CO2_EXCLUSION,
	DEFAULT_EXCLUSION_REGIONS,
	firstDerivative,
	inclusionMask,
	makeGrid,
	medianSpacing,
	normalise,
	NoOverlap,
	resample,
	resampleToCommonGrid,
	smooth,
} from '#shared/spectra/preprocess.ts'
import type { Spectrum } from '#shared/spectra/types.ts'
import { synthesise } from '#tests/unit/spectra/synthetic.ts'

function line(from: number, to: number, step: number, f: (x: number) => number): Spectrum {
	const x = makeGrid(from, to, step)
	return { x, y: x.map(f) }
}

test('linear interpolation reproduces a straight line exactly on a new grid', () => {
	const s = line(400, 4000, 1.929, (x) => 0.001 * x + 0.2)
	const grid = makeGrid(500, 3900, 1)
	const r = resample(s, grid)
	for (let i = 0; i < grid.length; i += 97) expect(r.y[i]).toBeCloseTo(0.001 * grid[i]! + 0.2, 12)
	expect(() => resample(s, makeGrid(300, 500, 1))).toThrow(RangeError)
})

test('the common grid spans only the overlap, at the coarser spacing, and never extrapolates', () => {
	const a = line(450, 4400, 0.5, (x) => Math.sin(x / 100))
	const b = line(649.9, 4000.1, 2, (x) => Math.cos(x / 100))
	const result = resampleToCommonGrid(a, b)
	expect(result.ok).toBe(true)
	if (!result.ok) return
	const { grid, step } = result.value
	expect(step).toBeCloseTo(2, 12)
	expect(grid[0]).toBeCloseTo(649.9, 9)
	expect(grid[grid.length - 1]!).toBeLessThanOrEqual(4000.1 + 1e-9)
	expect(medianSpacing(grid)).toBeCloseTo(2, 9)
	const restricted = resampleToCommonGrid(a, b, { range: { from: 700, to: 3900 }, step: 1 })
	expect(restricted.ok && restricted.value.grid[0]).toBe(700)
	const apart = resampleToCommonGrid(
		line(400, 1000, 1, () => 1),
		line(2000, 3000, 1, () => 1),
	)
	expect(apart.ok).toBe(false)
	if (!apart.ok) expect(apart.error).toBeInstanceOf(NoOverlap)
})

test('the default exclusion is atmospheric CO₂ 2400–2280 cm⁻¹', () => {
	// Source: issue 3 item 2 (product default); CO₂ ν₃ centre 2349.143 cm⁻¹, FACTS.md §6.8 [READ].
	expect(DEFAULT_EXCLUSION_REGIONS).toEqual([CO2_EXCLUSION])
	expect(CO2_EXCLUSION.from).toBe(2280)
	expect(CO2_EXCLUSION.to).toBe(2400)
	const x = Float64Array.from([2270, 2280, 2349.143, 2400, 2410])
	expect(Array.from(inclusionMask(x, { exclusionRegions: DEFAULT_EXCLUSION_REGIONS }))).toEqual([1, 0, 0, 0, 1])
	expect(Array.from(inclusionMask(x, { range: { from: 2275, to: 2405 } }))).toEqual([0, 1, 1, 1, 0])
})

test('Savitzky–Golay output keeps the input length and its derivative of a quadratic is exact', () => {
	// ml-savitzky-golay without `pad` returns a shorter array (STACK.md pitfall 6).
	const s = line(1000, 1100, 0.5, (x) => 1e-4 * (x - 1050) ** 2)
	const d = firstDerivative(s, { windowSize: 9, polynomial: 2 })
	expect(d.length).toBe(s.x.length)
	for (let i = 10; i < s.x.length - 10; i += 7) expect(d[i]).toBeCloseTo(2e-4 * (s.x[i]! - 1050), 10)
	const smoothed = smooth(s, { windowSize: 9, polynomial: 2 })
	expect(smoothed.y.length).toBe(s.y.length)
	expect(smoothed.y[50]).toBeCloseTo(s.y[50]!, 10)
})

test('Savitzky–Golay smoothing lowers white noise', () => {
	const clean = synthesise([{ position: 1700, height: 1, fwhm: 30 }], { from: 1500, to: 1900, step: 1 })
	const noisy = synthesise([{ position: 1700, height: 1, fwhm: 30 }], {
		from: 1500,
		to: 1900,
		step: 1,
		noise: 0.01,
		seed: 7,
	})
	const smoothed = smooth(noisy, { windowSize: 11, polynomial: 2 })
	const rms = (y: Float64Array) => Math.sqrt(y.reduce((s, v, i) => s + (v - clean.y[i]!) ** 2, 0) / y.length)
	expect(rms(smoothed.y)).toBeLessThan(0.6 * rms(noisy.y))
})

const bands = [
	{ position: 1000, height: 0.8, fwhm: 15 },
	{ position: 1600, height: 0.5, fwhm: 10 },
	{ position: 2900, height: 0.6, fwhm: 25 },
	{ position: 3300, height: 0.3, fwhm: 200 },
]

for (const method of ['airpls', 'als'] as const) {
	test(`${method} baseline correction removes a curved baseline under the bands`, () => {
		// Synthetic check (no outside source): bands on a known quadratic baseline.
		const baseline = { a: 0.3, b: 1e-4, c: 2e-8 }
		const spectrum = synthesise(bands, { from: 600, to: 4000, step: 2, baseline })
		const truth = synthesise(bands, { from: 600, to: 4000, step: 2 })
		const options = { method }
		const { corrected } = correctBaseline(spectrum, options)
		let worst = 0
		for (let i = 0; i < truth.y.length; i++) {
			if (truth.y[i]! < 0.02) worst = Math.max(worst, Math.abs(corrected.y[i]!))
		}
		expect(worst).toBeLessThan(0.05)
		const i1000 = 200
		expect(corrected.y[i1000]).toBeGreaterThan(0.7)
	})
}

test('normalisation: max → 1, unit vector → norm 1, SNV → mean 0 and sd 1', () => {
	const y = Float64Array.from([1, 2, 3, 4])
	expect(Math.max(...normalise(y, 'max'))).toBe(1)
	const unit = normalise(y, 'unit-vector')
	expect(Math.hypot(...unit)).toBeCloseTo(1, 12)
	const snv = normalise(y, 'snv')
	expect(snv.reduce((s, v) => s + v, 0)).toBeCloseTo(0, 12)
	expect(Math.sqrt(snv.reduce((s, v) => s + v * v, 0) / 4)).toBeCloseTo(1, 12)
	expect(Array.from(normalise(Float64Array.from([0, 0]), 'max'))).toEqual([0, 0])
})
