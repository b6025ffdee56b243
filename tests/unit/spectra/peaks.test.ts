import { expect, test } from 'vitest'

import { BROAD_BAND_FWHM, estimateNoiseSigma, nearestPeak, pickPeaks } from '#shared/spectra/peaks.ts'
import { makeGrid } from '#shared/spectra/preprocess.ts'
import { loadReference } from '#tests/unit/spectra/load-reference.ts'
import { synthesise } from '#tests/unit/spectra/synthetic.ts'

// Synthetic checks: positions, widths and heights are chosen by the test, no outside source.

test('positions, prominence and FWHM of isolated bands are recovered', () => {
	const bands = [
		{ position: 1000.3, height: 0.8, fwhm: 12, eta: 0 },
		{ position: 1712.7, height: 1.0, fwhm: 20, eta: 0 },
		{ position: 3340, height: 0.4, fwhm: 250, eta: 0 },
	]
	const spectrum = synthesise(bands, { from: 600, to: 4000, step: 1 })
	const peaks = pickPeaks(spectrum, { smoothing: null })
	expect(peaks).toHaveLength(3)
	peaks.forEach((peak, i) => {
		const band = bands[i]!
		expect(Math.abs(peak.position - band.position)).toBeLessThan(0.1)
		expect(peak.intensity).toBeCloseTo(band.height, 2)
		expect(Math.abs(peak.width - band.fwhm) / band.fwhm).toBeLessThan(0.05)
	})
	expect(peaks.map((p) => p.shape)).toEqual(['sharp', 'sharp', 'broad'])
	expect(BROAD_BAND_FWHM).toBe(60)
})

test('prominence separates a small band on the flank of a big one, and thresholds drop noise', () => {
	const spectrum = synthesise(
		[
			{ position: 1500, height: 1, fwhm: 40 },
			{ position: 1540, height: 0.1, fwhm: 8 },
		],
		{ from: 1300, to: 1700, step: 0.5, noise: 0.002, seed: 3 },
	)
	const peaks = pickPeaks(spectrum)
	expect(peaks).toHaveLength(2)
	// The sloping flank of the big band pulls the small band's apparent maximum slightly towards it.
	expect(Math.abs(peaks[0]!.position - 1500)).toBeLessThan(0.5)
	expect(Math.abs(peaks[1]!.position - 1540)).toBeLessThan(2)
	const small = peaks[1]!
	expect(small.prominence).toBeGreaterThan(0.005)
	expect(small.prominence).toBeLessThan(small.intensity)
	expect(pickPeaks(spectrum, { minProminence: 0.1 }).map((p) => Math.round(p.position))).toEqual([1500])
	expect(estimateNoiseSigma(spectrum.y)).toBeGreaterThan(0.0005)
})

test('a clipped band counts as one peak at the middle of its plateau', () => {
	const x = makeGrid(600, 800, 1)
	const y = x.map((v) => Math.min(5, 8 / (1 + ((v - 700) / 10) ** 2)))
	const peaks = pickPeaks({ x, y }, { smoothing: null })
	expect(peaks).toHaveLength(1)
	expect(peaks[0]!.position).toBeCloseTo(700, 6)
	expect(peaks[0]!.intensity).toBe(5)
})

test('region and exclusion regions limit where peaks are reported', () => {
	const spectrum = synthesise(
		[
			{ position: 1000, height: 1, fwhm: 10 },
			{ position: 2350, height: 1, fwhm: 10 },
			{ position: 3000, height: 1, fwhm: 10 },
		],
		{ from: 600, to: 4000 },
	)
	const peaks = pickPeaks(spectrum, { region: { from: 900, to: 3500 }, exclusionRegions: [{ from: 2280, to: 2400 }] })
	expect(peaks.map((p) => Math.round(p.position))).toEqual([1000, 3000])
	expect(nearestPeak(peaks, 1003, 5)!.position).toBeCloseTo(1000, 1)
	expect(nearestPeak(peaks, 1010, 5)).toBeNull()
})

test('real spectrum: the acetophenone C=O is picked near 1680 cm⁻¹ and isopropanol O–H is broad', () => {
	// SOURCES.md: acetophenone_pe1000.jdx "aryl ketone, C=O 1679"; isopropanol_atr_znse_nrcan.csv "broad O–H about 3340".
	const acetophenone = pickPeaks(loadReference('compounds/acetophenone_pe1000.jdx'))
	const carbonyl = nearestPeak(acetophenone, 1679, 6)
	expect(carbonyl).not.toBeNull()
	expect(carbonyl!.shape).toBe('sharp')
	const isopropanol = pickPeaks(loadReference('compounds/isopropanol_atr_znse_nrcan.csv'))
	const oh = nearestPeak(isopropanol, 3340, 20)
	expect(oh).not.toBeNull()
	expect(oh!.shape).toBe('broad')
	expect(oh!.width).toBeGreaterThan(150)
})
