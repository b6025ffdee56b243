/**
 * Identity comparison of a sample spectrum with a reference spectrum under a specification's acceptance
 * criteria: common grid, optional baseline correction, Pearson and first-derivative correlation and distance
 * over the included regions, band-table matching, extra bands, quality flags, and a verdict with its reasons.
 * Pure and deterministic: the same inputs and criteria always give the same numbers.
 *
 * Verdict rule:
 * 1. A failed criterion measured on valid data gives 'does-not-conform'. Data are valid when no flag that makes
 *    the verdict inconclusive also leaves its problem inside the metrics (noise, a CO₂ artefact in range, strongly
 *    negative absorbance); saturated points and missing range are left out of the metrics, so a failure on the
 *    rest still stands.
 * 2. Otherwise any flag that makes the verdict inconclusive gives 'inconclusive'.
 * 3. Otherwise 'conforms'. A conforming comparison supports, and never replaces, the lab's approved procedure.
 */
import { type BandMatch, type ExtraBand, findExtraBands, matchBands } from '#shared/spectra/bands.ts'
import type { AcceptanceCriteria } from '#shared/spectra/criteria.ts'
import { pickPeaks, windowForSpan } from '#shared/spectra/peaks.ts'
import {
	correctBaseline,
	countIncluded,
	ENGINE_VERSION,
	firstDerivative,
	inclusionMask,
	indexRange,
	type Region,
	resampleToCommonGrid,
} from '#shared/spectra/preprocess.ts'
import { assessQuality, type QualityFlag } from '#shared/spectra/quality.ts'
import { euclideanDistance, pearson } from '#shared/spectra/similarity.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

export const COMPARE_ALGORITHM = 'pearson-derivative-bands'

/** Span of the Savitzky–Golay first-derivative window, cm⁻¹ (about two resolution elements). Common practice, no source. */
export const DERIVATIVE_SPAN = 10

/** Quadratic polynomial for the derivative window. */
export const DERIVATIVE_POLYNOMIAL = 2

/** Fewest included grid points for a meaningful correlation. */
export const MIN_COMPARED_POINTS = 50

export type Verdict = 'conforms' | 'does-not-conform' | 'inconclusive'

export type ComparisonFlag = QualityFlag & { spectrum: 'reference' | 'sample' }

export type Comparison = {
	verdict: Verdict
	/** Why: every failed criterion and every blocking flag, in plain words. Empty only for 'conforms'. */
	reasons: Array<string>
	correlation: number | null
	derivativeCorrelation: number | null
	distance: number | null
	flags: Array<ComparisonFlag>
	bands: Array<BandMatch>
	extraBands: Array<ExtraBand>
	/** Grid actually used and how many points were compared. */
	grid: { from: number; to: number; step: number; points: number; comparedPoints: number }
	algorithm: typeof COMPARE_ALGORITHM
	algorithmVersion: string
	params: {
		criteria: AcceptanceCriteria
		derivative: { windowSize: number | null; polynomial: number; span: number }
		interpolation: 'linear'
	}
}

/**
 * Compare `sample` with `reference` (absorbance, x ascending in cm⁻¹) under parsed `criteria`.
 * Never throws for spectra that do not overlap: that is an 'inconclusive' verdict with its reason.
 */
export function compareSpectra(reference: Spectrum, sample: Spectrum, criteria: AcceptanceCriteria): Comparison {
	const reasons: Array<string> = []
	const failures: Array<string> = []
	// Peaks are picked once per spectrum, on the original points (no interpolation), and shared with the flags.
	const referencePeaksAll = pickPeaks(reference)
	const samplePeaksAll = pickPeaks(sample)
	const referenceQuality = assessQuality(reference, {
		range: criteria.range,
		exclusionRegions: criteria.exclusionRegions,
		peaks: referencePeaksAll,
	})
	const sampleQuality = assessQuality(sample, {
		range: criteria.range,
		exclusionRegions: criteria.exclusionRegions,
		peaks: samplePeaksAll,
	})
	const flags: Array<ComparisonFlag> = [
		...referenceQuality.flags.map((f) => ({ ...f, spectrum: 'reference' as const })),
		...sampleQuality.flags.map((f) => ({ ...f, spectrum: 'sample' as const })),
	]
	const base = {
		algorithm: COMPARE_ALGORITHM,
		algorithmVersion: ENGINE_VERSION,
	} as const

	const common = resampleToCommonGrid(reference, sample, { range: criteria.range })
	if (!common.ok) {
		return {
			...base,
			verdict: 'inconclusive',
			reasons: [`${common.error.message} inside ${criteria.range.from}–${criteria.range.to} cm⁻¹`],
			correlation: null,
			derivativeCorrelation: null,
			distance: null,
			flags,
			bands: [],
			extraBands: [],
			grid: { from: criteria.range.from, to: criteria.range.to, step: 0, points: 0, comparedPoints: 0 },
			params: {
				criteria,
				derivative: { windowSize: null, polynomial: DERIVATIVE_POLYNOMIAL, span: DERIVATIVE_SPAN },
				interpolation: 'linear',
			},
		}
	}
	const { grid, step, range } = common.value
	const a =
		criteria.baseline.method === 'none' ? common.value.a : correctBaseline(common.value.a, criteria.baseline).corrected
	const b =
		criteria.baseline.method === 'none' ? common.value.b : correctBaseline(common.value.b, criteria.baseline).corrected

	// Included points: inside the range, outside exclusions, and saturated in neither spectrum.
	const mask = inclusionMask(grid, { range, exclusionRegions: criteria.exclusionRegions })
	const saturatedA = saturationOnGrid(reference, referenceQuality.saturatedMask, grid)
	const saturatedB = saturationOnGrid(sample, sampleQuality.saturatedMask, grid)
	for (let i = 0; i < grid.length; i++) if (saturatedA[i] || saturatedB[i]) mask[i] = 0
	const comparedPoints = countIncluded(mask)

	const windowSize = windowForSpan(DERIVATIVE_SPAN, step) ?? 5
	const derivativeOptions = { windowSize, polynomial: DERIVATIVE_POLYNOMIAL }
	let correlation: number | null = null
	let derivativeCorrelation: number | null = null
	let distance: number | null = null
	if (comparedPoints >= MIN_COMPARED_POINTS) {
		correlation = pearson(a.y, b.y, mask)
		derivativeCorrelation =
			grid.length >= windowSize
				? pearson(
						firstDerivative(a, derivativeOptions),
						firstDerivative(b, derivativeOptions),
						// NOTE: a derivative window that reaches into an excluded or saturated stretch carries it along.
						erodeMask(mask, Math.floor(windowSize / 2)),
					)
				: null
		distance = euclideanDistance(a.y, b.y, mask)
	} else {
		reasons.push(`only ${comparedPoints} points remain after exclusions (at least ${MIN_COMPARED_POINTS} needed)`)
	}

	if (correlation !== null && correlation < criteria.minCorrelation) {
		failures.push(`correlation ${correlation.toFixed(4)} is below the minimum ${criteria.minCorrelation}`)
	}
	if (
		criteria.minDerivativeCorrelation !== null &&
		derivativeCorrelation !== null &&
		derivativeCorrelation < criteria.minDerivativeCorrelation
	) {
		failures.push(
			`first-derivative correlation ${derivativeCorrelation.toFixed(4)} is below the minimum ${criteria.minDerivativeCorrelation}`,
		)
	}
	if (criteria.maxDistance !== null && distance !== null && distance > criteria.maxDistance) {
		failures.push(`distance ${distance.toFixed(4)} is above the maximum ${criteria.maxDistance}`)
	}

	// Bands: peaks inside the compared range and outside exclusions.
	const usable = (position: number) =>
		position >= range.from &&
		position <= range.to &&
		!criteria.exclusionRegions.some((r) => position >= r.from && position <= r.to)
	const referencePeaks = referencePeaksAll.filter((p) => usable(p.position))
	const samplePeaks = samplePeaksAll.filter((p) => usable(p.position))
	const sampleFloor = minimumIn(sample, range)
	const referenceFloor = minimumIn(reference, range)
	const bands = matchBands(criteria.bands, samplePeaks, referencePeaks, {
		defaultTolerance: criteria.defaultBandTolerance,
		sampleFloor,
		referenceFloor,
	})
	for (const band of bands) {
		const label = `${band.expected.position} cm⁻¹${band.expected.assignment ? ` (${band.expected.assignment})` : ''}`
		if (!band.withinTolerance) {
			if (band.expected.required)
				failures.push(`required band ${label} not found within ±${band.expected.tolerance.toFixed(1)} cm⁻¹`)
			continue
		}
		const difference = band.relativeIntensity.difference
		if (
			criteria.relativeIntensityTolerance !== null &&
			difference !== null &&
			Math.abs(difference) > criteria.relativeIntensityTolerance
		) {
			failures.push(
				`band ${label}: relative intensity ${band.relativeIntensity.sample!.toFixed(2)} vs reference ${band.relativeIntensity.reference!.toFixed(2)} (tolerance ±${criteria.relativeIntensityTolerance})`,
			)
		}
	}
	const saturatedRegions = flags.filter((f) => f.code === 'saturation').flatMap((f) => f.regions)
	const extraBands = findExtraBands(samplePeaks, referencePeaks, {
		tolerance: criteria.defaultBandTolerance,
		minRelativeIntensity: criteria.extraBandMinRelativeIntensity,
		sampleFloor,
		isIncluded: (position) => !saturatedRegions.some((r) => position >= r.from && position <= r.to),
	})
	if (criteria.failOnExtraBands && extraBands.length > 0) {
		failures.push(
			`strong sample bands absent from the reference at ${extraBands.map((e) => e.position.toFixed(0)).join(', ')} cm⁻¹`,
		)
	}

	const blocking = flags.filter((f) => f.makesInconclusive)
	const blockingReasons = blocking.map((f) => `${f.spectrum}: ${f.message}`)
	const failureStands = blocking.every((f) => f.excludedFromMetrics)
	let verdict: Verdict
	if (failures.length > 0 && failureStands) verdict = 'does-not-conform'
	else if (blocking.length > 0 || reasons.length > 0 || correlation === null) verdict = 'inconclusive'
	else verdict = 'conforms'
	const allReasons = verdict === 'conforms' ? [] : [...failures, ...blockingReasons, ...reasons]
	if (verdict === 'inconclusive' && correlation === null && reasons.length === 0)
		allReasons.push('the correlation is undefined (a flat spectrum)')

	return {
		...base,
		verdict,
		reasons: allReasons,
		correlation,
		derivativeCorrelation,
		distance,
		flags,
		bands,
		extraBands,
		grid: { from: grid[0]!, to: grid[grid.length - 1]!, step, points: grid.length, comparedPoints },
		params: {
			criteria,
			derivative: { windowSize, polynomial: DERIVATIVE_POLYNOMIAL, span: DERIVATIVE_SPAN },
			interpolation: 'linear',
		},
	}
}

/** Keep a point only if every point within ±radius is kept too (the grid edges count as kept). */
function erodeMask(mask: Uint8Array, radius: number): Uint8Array {
	const n = mask.length
	const out = new Uint8Array(n)
	let lastExcluded = -Infinity
	// Distance to the nearest excluded point on the left, then on the right.
	const left = new Float64Array(n)
	for (let i = 0; i < n; i++) {
		if (!mask[i]) lastExcluded = i
		left[i] = i - lastExcluded
	}
	let nextExcluded = Infinity
	for (let i = n - 1; i >= 0; i--) {
		if (!mask[i]) nextExcluded = i
		out[i] = mask[i] && left[i]! > radius && nextExcluded - i > radius ? 1 : 0
	}
	return out
}

/** Project a per-point saturation mask onto a grid: a grid point is saturated if the nearest source point on either side is. */
function saturationOnGrid(spectrum: Spectrum, saturated: Uint8Array, grid: Float64Array): Uint8Array {
	const out = new Uint8Array(grid.length)
	let j = 0
	for (let i = 0; i < grid.length; i++) {
		const g = grid[i]!
		while (j < spectrum.x.length - 1 && spectrum.x[j + 1]! <= g) j++
		const next = Math.min(j + 1, spectrum.x.length - 1)
		if (saturated[j] || (spectrum.x[j]! < g && saturated[next])) out[i] = 1
	}
	return out
}

function minimumIn(spectrum: Spectrum, range: Region): number {
	const { start, end } = indexRange(spectrum.x, range.from, range.to)
	let min = Infinity
	for (let i = start; i < end; i++) if (spectrum.y[i]! < min) min = spectrum.y[i]!
	return Number.isFinite(min) ? min : 0
}

/** The regions a comparison leaves out, for display: exclusions plus saturated regions from the flags. */
export function excludedRegions(comparison: Comparison): Array<Region> {
	return [
		...comparison.params.criteria.exclusionRegions,
		...comparison.flags.filter((f) => f.code === 'saturation').flatMap((f) => f.regions),
	]
}
