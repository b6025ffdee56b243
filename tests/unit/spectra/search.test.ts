import fc from 'fast-check'
import { expect, test } from 'vitest'

import { DEFAULT_EXCLUSION_REGIONS, inclusionMask, makeGrid, resample } from '#shared/spectra/preprocess.ts'
import {
	DEFAULT_LIBRARY_GRID,
	type LibraryEntry,
	NotSearchable,
	prepareLibrary,
	prepareQuery,
	scoreLibrary,
	searchLibrary,
	specificity,
} from '#shared/spectra/search.ts'
import { pearson } from '#shared/spectra/similarity.ts'
import type { Spectrum } from '#shared/spectra/types.ts'
import { loadReference } from '#tests/unit/spectra/load-reference.ts'
import { synthesise } from '#tests/unit/spectra/synthetic.ts'

function randomSpectrum(seed: number): Spectrum {
	const random = (k: number) => (((Math.sin(seed * 12.9898 + k * 78.233) * 43758.5453) % 1) + 1) % 1
	return synthesise(
		Array.from({ length: 8 }, (_, k) => ({
			position: 700 + random(k) * 3200,
			height: 0.1 + random(k + 50),
			fwhm: 5 + 40 * random(k + 99),
		})),
		{ from: 600, to: 4000.5, step: 1.5, noise: 0.001, seed },
	)
}

test('a library score is the Pearson correlation over the included grid points', () => {
	// The dot product of mean-centred unit vectors is Pearson's r (FACTS.md §5.1 formula, MEMORY-labelled standard maths).
	const entries = Array.from({ length: 6 }, (_, i) => ({ id: `s${i}`, spectrum: randomSpectrum(i + 1) }))
	const sample = randomSpectrum(42)
	const library64 = prepareLibrary(entries, { precision: 'float64' })
	const library32 = prepareLibrary(entries)
	const query = prepareQuery(library64, sample)
	expect(query.ok).toBe(true)
	if (!query.ok) return
	const scores64 = scoreLibrary(library64, query.value)
	const scores32 = scoreLibrary(library32, query.value)
	const grid = makeGrid(DEFAULT_LIBRARY_GRID.from, DEFAULT_LIBRARY_GRID.to, DEFAULT_LIBRARY_GRID.step)
	const mask = inclusionMask(grid, { exclusionRegions: DEFAULT_EXCLUSION_REGIONS })
	entries.forEach((entry, i) => {
		const expected = pearson(resample(entry.spectrum, grid).y, resample(sample, grid).y, mask)!
		expect(Math.abs(scores64[i]! - expected)).toBeLessThan(1e-12)
		expect(Math.abs(scores32[i]! - expected)).toBeLessThan(2e-6)
	})
	expect(library32.data).toBeInstanceOf(Float32Array)
	expect(library32.data.length).toBe(6 * library32.rowLength)
})

test('property: an odd number of rows and any row length score like Pearson (float64)', () => {
	fc.assert(
		fc.property(fc.integer({ min: 1, max: 7 }), fc.integer({ min: 1, max: 1000 }), (count, seed) => {
			const entries = Array.from({ length: count }, (_, i) => ({ id: `r${i}`, spectrum: randomSpectrum(seed + i) }))
			const grid = { from: 700, to: 700 + 3 * (20 + (seed % 13)), step: 3 }
			const library = prepareLibrary(entries, { grid, precision: 'float64', exclusionRegions: [] })
			const sample = randomSpectrum(seed + 99)
			const query = prepareQuery(library, sample)
			if (!query.ok) return
			const scores = scoreLibrary(library, query.value)
			const x = makeGrid(grid.from, grid.to, grid.step)
			entries.forEach((entry, i) => {
				const r = pearson(resample(entry.spectrum, x).y, resample(sample, x).y)
				if (r !== null) expect(Math.abs(scores[i]! - r)).toBeLessThan(1e-9)
			})
		}),
		{ numRuns: 60 },
	)
})

const realLibrary: Array<LibraryEntry> = [
	['unil_tablet_0140_1a_absorbance.jdx', 'Z140'],
	['unil_tablet_0189_1a_absorbance.jdx', 'Z189'],
	['unil_tablet_0235_1a_absorbance.jdx', 'Z235'],
	['4_chloroaniline_solid_pe1000.jdx', '4-chloroaniline'],
	['3_chloroaniline_pe1000.jdx', '3-chloroaniline'],
	['2_chloroaniline_pe1000.jdx', '2-chloroaniline'],
	['ethylbenzene_pe1000.jdx', 'ethylbenzene'],
	['n_hexane_pe1000.jdx', 'n-hexane'],
	['acetophenone_pe1000.jdx', 'acetophenone'],
	['chloroform_pe1000.jdx', 'chloroform'],
].map(([file, material]) => ({ id: file!, material, spectrum: loadReference(`compounds/${file}`) }))

test('[SRCH-001] a replicate tablet measurement finds its own sample first', () => {
	// SOURCES.md: Z140 replicates correlate at about 0.998; Z140 vs the others at about 0.35.
	const library = prepareLibrary(realLibrary)
	const result = searchLibrary(library, loadReference('compounds/unil_tablet_0140_1b_absorbance.jdx'), { top: 3 })
	expect(result.ok).toBe(true)
	if (!result.ok) return
	const [first, second] = result.value.results
	expect(first).toMatchObject({ id: 'unil_tablet_0140_1a_absorbance.jdx', rank: 1 })
	expect(first!.correlation).toBeGreaterThan(0.99)
	expect(second!.correlation).toBeLessThan(0.6)
	expect(result.value.results).toHaveLength(3)
	expect(result.value.algorithmVersion).toBeTruthy()
})

test('[SRCH-002] specificity: Z189’s nearest other sample is Z235 at about 0.965 — specific at 0.98, not at 0.95', () => {
	// SOURCES.md: "Z189 vs Z235 correlate at about 0.965". The 0.95 floor is the NIR figure quoted in FACTS.md §2.3 [READ-2°].
	const library = prepareLibrary(realLibrary)
	const strict = specificity(library, 'unil_tablet_0189_1a_absorbance.jdx', 0.98)
	expect(strict.ok).toBe(true)
	if (!strict.ok) return
	expect(strict.value.nearest!.material).toBe('Z235')
	expect(Math.abs(strict.value.nearest!.correlation - 0.965)).toBeLessThan(0.01)
	expect(strict.value.margin!).toBeGreaterThan(0)
	expect(strict.value.specific).toBe(true)
	const loose = specificity(library, 'unil_tablet_0189_1a_absorbance.jdx', 0.95)
	expect(loose.ok && loose.value.specific).toBe(false)
	expect(loose.ok && loose.value.margin!).toBeLessThan(0)
	expect(specificity(library, 'missing', 0.98).ok).toBe(false)
})

test('[SRCH-003] references of the same material are not counted against specificity', () => {
	const library = prepareLibrary([
		...realLibrary,
		{
			id: 'unil_tablet_0189_1b_absorbance.jdx',
			material: 'Z189',
			spectrum: loadReference('compounds/unil_tablet_0189_1b_absorbance.jdx'),
		},
	])
	const result = specificity(library, 'unil_tablet_0189_1a_absorbance.jdx', 0.98)
	expect(result.ok && result.value.nearest!.material).toBe('Z235')
})

test('a library can be built from a lazy source, and a sample off the grid is refused', () => {
	const library = prepareLibrary({ count: 3, entry: (i) => ({ id: `lazy${i}`, spectrum: randomSpectrum(i + 7) }) })
	expect(library.ids).toEqual(['lazy0', 'lazy1', 'lazy2'])
	const offGrid = synthesise([{ position: 5000, height: 1, fwhm: 10 }], { from: 4500, to: 6000 })
	const result = searchLibrary(library, offGrid)
	expect(result.ok).toBe(false)
	if (!result.ok) expect(result.error).toBeInstanceOf(NotSearchable)
	// Partial coverage is recorded per reference (isobutyl acrylate stops at 700 cm⁻¹; SOURCES.md).
	const partial = prepareLibrary([
		{ id: 'acrylate', spectrum: loadReference('compounds/isobutyl_acrylate_pe1800_PAC.jdx') },
	])
	expect(partial.coverage[0]!).toBeLessThan(1)
	expect(partial.coverage[0]!).toBeGreaterThan(0.95)
})
