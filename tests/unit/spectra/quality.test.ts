import { expect, test } from 'vitest'

import { DEFAULT_EXCLUSION_REGIONS } from '#shared/spectra/preprocess.ts'
import { assessQuality, detectSaturation, SATURATION_ABSORBANCE } from '#shared/spectra/quality.ts'
import { loadReference } from '#tests/unit/spectra/load-reference.ts'
import { synthesise } from '#tests/unit/spectra/synthetic.ts'

test('[QF-001] toluene ATR clipped at absorbance 5.0 raises a saturation flag on its strongest bands', () => {
	// SOURCES.md compounds/toluene_atr_znse_nrcan.csv: "Absorbance is clipped at 5.0 in the strongest bands".
	const spectrum = loadReference('compounds/toluene_atr_znse_nrcan.csv')
	const report = assessQuality(spectrum, {
		range: { from: 650, to: 4000 },
		exclusionRegions: DEFAULT_EXCLUSION_REGIONS,
	})
	const flag = report.flags.find((f) => f.code === 'saturation')
	expect(flag).toBeDefined()
	expect(flag!.excludedFromMetrics).toBe(true)
	// Toluene's strongest bands are the monosubstituted-ring out-of-plane pair near 730 and 695 cm⁻¹
	// (FACTS.md §6.6, W: monosubstituted 770–730 and 710–690).
	const covers = (x: number) => flag!.regions.some((r) => x >= r.from && x <= r.to)
	expect(covers(728) || covers(725)).toBe(true)
	expect(covers(694)).toBe(true)
	for (let i = 0; i < spectrum.x.length; i++) if (spectrum.y[i]! >= 5) expect(report.saturatedMask[i]).toBe(1)
})

test('[QF-002] chloroform’s flat-topped C–Cl band is detected as saturated though its absorbance stays below 1', () => {
	// SOURCES.md compounds/chloroform_pe1000.jdx: "Strong bands are saturated". The band bottoms out at the
	// stray-light floor near 750–778 cm⁻¹ (C–Cl region 850–550, FACTS.md §6.7) rather than reaching T = 0.
	const spectrum = loadReference('compounds/chloroform_pe1000.jdx')
	let max = 0
	for (const v of spectrum.y) max = Math.max(max, v)
	expect(max).toBeLessThan(SATURATION_ABSORBANCE)
	const report = assessQuality(spectrum)
	const flag = report.flags.find((f) => f.code === 'saturation')
	expect(flag).toBeDefined()
	expect(flag!.regions.some((r) => r.from <= 760 && r.to >= 770)).toBe(true)
})

test('[QF-003] a clean synthetic spectrum raises no flags', () => {
	const clean = synthesise(
		[
			{ position: 1000, height: 0.8, fwhm: 15 },
			{ position: 2900, height: 0.5, fwhm: 20 },
		],
		{ from: 600, to: 4000, noise: 0.0005, seed: 4 },
	)
	const report = assessQuality(clean, { range: { from: 650, to: 4000 }, exclusionRegions: DEFAULT_EXCLUSION_REGIONS })
	expect(report.flags).toEqual([])
	expect(report.noise!.rms).toBeGreaterThan(0.0003)
	expect(report.noise!.rms).toBeLessThan(0.0008)
})

test('[QF-004] a CO₂ doublet is flagged; it blocks a verdict only when the region is not excluded', () => {
	// CO₂ ν₃ centre 2349.143 cm⁻¹ [READ] and P/R branches ≈2360/≈2340 [MEMORY]: FACTS.md §6.8.
	const spectrum = synthesise(
		[
			{ position: 1000, height: 1, fwhm: 15 },
			{ position: 2360, height: 0.1, fwhm: 12 },
			{ position: 2340, height: 0.08, fwhm: 12 },
		],
		{ from: 600, to: 4000 },
	)
	const excluded = assessQuality(spectrum, { exclusionRegions: DEFAULT_EXCLUSION_REGIONS }).flags.find(
		(f) => f.code === 'co2-artefact',
	)
	expect(excluded).toMatchObject({ severity: 'info', makesInconclusive: false, excludedFromMetrics: true })
	const included = assessQuality(spectrum, { exclusionRegions: [] }).flags.find((f) => f.code === 'co2-artefact')
	expect(included).toMatchObject({ makesInconclusive: true, excludedFromMetrics: false })
})

test('[QF-005] a spectrum short of the specification range is flagged and blocks "conforms"', () => {
	// SOURCES.md: isobutyl_acrylate_pe1800_PAC.jdx covers 4000→700 cm⁻¹; the default range is 650–4000 (FACTS.md §2.2 [READ]).
	const spectrum = loadReference('compounds/isobutyl_acrylate_pe1800_PAC.jdx')
	const flag = assessQuality(spectrum, { range: { from: 650, to: 4000 } }).flags.find(
		(f) => f.code === 'range-coverage',
	)
	expect(flag).toMatchObject({ makesInconclusive: true, excludedFromMetrics: true })
	expect(flag!.regions[0]!.to).toBeCloseTo(700, 0)
	expect(
		assessQuality(spectrum, { range: { from: 700, to: 4000 } }).flags.some((f) => f.code === 'range-coverage'),
	).toBe(false)
})

test('[QF-006] negative absorbance: a warning when slight, blocking when strongly negative', () => {
	const slight = synthesise([{ position: 1000, height: 1, fwhm: 15 }], { from: 600, to: 4000, baseline: { a: -0.05 } })
	const strong = synthesise([{ position: 1000, height: 1, fwhm: 15 }], { from: 600, to: 4000, baseline: { a: -0.3 } })
	expect(assessQuality(slight).flags.find((f) => f.code === 'negative-absorbance')).toMatchObject({
		makesInconclusive: false,
	})
	expect(assessQuality(strong).flags.find((f) => f.code === 'negative-absorbance')).toMatchObject({
		makesInconclusive: true,
	})
})

test('[QF-007] heavy noise makes a verdict inconclusive', () => {
	const noisy = synthesise([{ position: 1000, height: 1, fwhm: 15 }], { from: 600, to: 4000, noise: 0.05, seed: 9 })
	const flag = assessQuality(noisy).flags.find((f) => f.code === 'noise')
	expect(flag).toMatchObject({ makesInconclusive: true })
})

test('detectSaturation marks absorbance ≥ 2 (T ≤ 1 %) and leaves an ordinary band alone', () => {
	const spectrum = synthesise(
		[
			{ position: 1000, height: 2.5, fwhm: 20 },
			{ position: 3000, height: 0.5, fwhm: 20 },
		],
		{ from: 600, to: 4000 },
	)
	const mask = detectSaturation(spectrum)
	expect(mask[400]).toBe(1) // 1000 cm⁻¹
	expect(mask[2400]).toBe(0) // 3000 cm⁻¹
})
