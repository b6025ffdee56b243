/**
 * Quality flags for one absorbance spectrum: saturation, noise, CO₂ artefact, range coverage and negative
 * absorbance. Each flag says whether it makes a comparison verdict inconclusive, and whether the flagged points
 * were left out of the comparison metrics (so that a failure measured on the remaining points still stands).
 * Pure; x in cm⁻¹ ascending, y in absorbance. Thresholds are named constants; none has a published source.
 */
import { CO2_EXCLUSION, indexRange, type Region } from '#shared/spectra/preprocess.ts'
import { type Peak, pickPeaks } from '#shared/spectra/peaks.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

export type QualityFlagCode = 'saturation' | 'noise' | 'co2-artefact' | 'range-coverage' | 'negative-absorbance'

export type QualityFlag = {
	code: QualityFlagCode
	severity: 'info' | 'warning' | 'critical'
	/** A comparison involving this spectrum cannot conclude "conforms" while this flag stands. */
	makesInconclusive: boolean
	/** The flagged points were excluded from the comparison metrics; a failure on the remaining points stands. */
	excludedFromMetrics: boolean
	message: string
	/** The measured quantity and the limit it was held against, in `unit`. */
	value: number | null
	limit: number | null
	unit: string
	/** Where the problem is, cm⁻¹. */
	regions: Array<Region>
}

/**
 * Absorbance at or above which a point counts as saturated: 2.0, i.e. 1 %T — "transmittance near zero"
 * (PRODUCT.md §4.3). Detector and stray-light limits make band shapes unreliable well before that; common
 * practice, no source.
 */
export const SATURATION_ABSORBANCE = 2.0

/** A run of at least this many identical values at the spectrum's maximum is clipping (e.g. an absorbance ceiling). */
export const CLIPPED_RUN_POINTS = 3

/**
 * A strong band whose width at 90 % of its prominence is at least this fraction of its FWHM has a flat top:
 * the signature of a band bottoming out at the instrument's stray-light floor. A Gaussian gives 0.39 and a
 * Lorentzian 0.33; common practice, no source.
 */
export const FLAT_TOP_RATIO = 0.55

/** Only bands at least this fraction of the absorbance span are examined for flat tops. */
export const FLAT_TOP_MIN_RELATIVE_PROMINENCE = 0.3

/** Saturated points above this fraction of the examined range make "conforms" impossible to claim. */
export const MAX_SATURATED_FRACTION = 0.02

/** Candidate windows for the noise estimate (cm⁻¹): regions where organic compounds rarely absorb. */
export const NOISE_WINDOWS: ReadonlyArray<Region> = [
	{ from: 1900, to: 2000 },
	{ from: 2000, to: 2100 },
	{ from: 2100, to: 2200 },
	{ from: 2450, to: 2550 },
	{ from: 2550, to: 2650 },
	{ from: 3800, to: 3900 },
	{ from: 3900, to: 4000 },
]

/** Noise RMS above this fraction of the absorbance span is a warning. */
export const NOISE_WARNING_RATIO = 0.01
/** Noise RMS above this fraction of the absorbance span makes a verdict inconclusive. */
export const NOISE_INCONCLUSIVE_RATIO = 0.03

/** CO₂ feature amplitude (relative to the absorbance span) above which the artefact is flagged. */
export const CO2_RELATIVE_LIMIT = 0.02

/** A spectrum may stop this many cm⁻¹ short of the specification range before coverage is flagged. */
export const RANGE_COVERAGE_SLACK = 2

/** Absorbance below this is flagged as negative (a warning). */
export const NEGATIVE_WARNING_ABSORBANCE = -0.02
/** Absorbance below this (T above ≈126 %) points to a wrong background and makes a verdict inconclusive. */
export const NEGATIVE_INCONCLUSIVE_ABSORBANCE = -0.1

export type QualityOptions = {
	/** The specification's range; coverage and all statistics are judged inside it. */
	range?: Region
	/** Regions excluded from comparisons (decides whether a CO₂ artefact matters). */
	exclusionRegions?: ReadonlyArray<Region>
	saturationAbsorbance?: number
	/** Peaks already picked on this spectrum with default options (saves picking them again). */
	peaks?: ReadonlyArray<Peak>
}

export type QualityReport = {
	flags: Array<QualityFlag>
	/** 1 where the point is saturated (above the limit, clipped or on a flat-topped band), per input point. */
	saturatedMask: Uint8Array
	/** Noise RMS in absorbance in the flattest candidate window, or null when no window lies in range. */
	noise: { rms: number; region: Region } | null
}

/**
 * Assess one spectrum. Flags are ordered by code. Pure and deterministic.
 */
export function assessQuality(spectrum: Spectrum, options: QualityOptions = {}): QualityReport {
	const { x, y } = spectrum
	const n = x.length
	const range = options.range ?? { from: x[0]!, to: x[n - 1]! }
	const inRange = (v: number) => v >= range.from && v <= range.to
	const within = indexRange(x, range.from, range.to)
	let min = Infinity
	let max = -Infinity
	let count = 0
	for (let i = within.start; i < within.end; i++) {
		const v = y[i]!
		if (!Number.isFinite(v)) continue
		count++
		if (v < min) min = v
		if (v > max) max = v
	}
	const span = max > min ? max - min : 0
	const flags: Array<QualityFlag> = []
	const saturatedMask = detectSaturation(spectrum, options.saturationAbsorbance ?? SATURATION_ABSORBANCE, options.peaks)

	// Saturation
	let saturatedCount = 0
	for (let i = within.start; i < within.end; i++) saturatedCount += saturatedMask[i]!
	if (saturatedCount > 0) {
		const fraction = count > 0 ? saturatedCount / count : 1
		const regions = maskRegions(x, saturatedMask).filter((r) => r.to >= range.from && r.from <= range.to)
		const blocking = fraction > MAX_SATURATED_FRACTION
		flags.push({
			code: 'saturation',
			severity: blocking ? 'critical' : 'warning',
			makesInconclusive: blocking,
			excludedFromMetrics: true,
			message: `${saturatedCount} points (${(100 * fraction).toFixed(1)} %) are saturated (absorbance ≥ ${options.saturationAbsorbance ?? SATURATION_ABSORBANCE}, clipped, or on a flat-topped band) at ${regions.map(formatRegion).join(', ')}; they are left out of the comparison`,
			value: fraction,
			limit: MAX_SATURATED_FRACTION,
			unit: 'fraction of points',
			regions,
		})
	}

	// Noise
	const noise = estimateNoise(spectrum, range)
	if (noise && span > 0) {
		const ratio = noise.rms / span
		if (ratio > NOISE_WARNING_RATIO) {
			const blocking = ratio > NOISE_INCONCLUSIVE_RATIO
			flags.push({
				code: 'noise',
				severity: blocking ? 'critical' : 'warning',
				makesInconclusive: blocking,
				excludedFromMetrics: false,
				message: `noise RMS ${noise.rms.toExponential(2)} A over ${formatRegion(noise.region)} is ${(100 * ratio).toFixed(1)} % of the absorbance span`,
				value: ratio,
				limit: blocking ? NOISE_INCONCLUSIVE_RATIO : NOISE_WARNING_RATIO,
				unit: 'noise RMS / absorbance span',
				regions: [noise.region],
			})
		}
	}

	// CO₂ artefact
	const co2 = co2Amplitude(spectrum)
	if (co2 !== null && span > 0 && co2 / span > CO2_RELATIVE_LIMIT && inRange(2349)) {
		const covered = (options.exclusionRegions ?? []).some((r) => r.from <= 2300 && r.to >= 2380)
		flags.push({
			code: 'co2-artefact',
			severity: covered ? 'info' : 'warning',
			makesInconclusive: !covered,
			excludedFromMetrics: covered,
			message: covered
				? `atmospheric CO₂ feature near 2349 cm⁻¹ (${((100 * co2) / span).toFixed(1)} % of the span); the region is excluded`
				: `atmospheric CO₂ feature near 2349 cm⁻¹ (${((100 * co2) / span).toFixed(1)} % of the span) inside the compared range; exclude 2400–2280 cm⁻¹ or re-measure the background`,
			value: co2 / span,
			limit: CO2_RELATIVE_LIMIT,
			unit: 'amplitude / absorbance span',
			regions: [{ from: CO2_EXCLUSION.from, to: CO2_EXCLUSION.to }],
		})
	}

	// Range coverage
	if (options.range) {
		const missing: Array<Region> = []
		if (x[0]! > options.range.from + RANGE_COVERAGE_SLACK) missing.push({ from: options.range.from, to: x[0]! })
		if (x[n - 1]! < options.range.to - RANGE_COVERAGE_SLACK) missing.push({ from: x[n - 1]!, to: options.range.to })
		if (missing.length > 0) {
			const length = options.range.to - options.range.from
			const covered = Math.max(0, Math.min(x[n - 1]!, options.range.to) - Math.max(x[0]!, options.range.from))
			flags.push({
				code: 'range-coverage',
				severity: 'critical',
				makesInconclusive: true,
				excludedFromMetrics: true,
				message: `the spectrum covers ${x[0]!.toFixed(1)}–${x[n - 1]!.toFixed(1)} cm⁻¹; the specification needs ${formatRegion(options.range)} (missing ${missing.map(formatRegion).join(', ')})`,
				value: length > 0 ? covered / length : 0,
				limit: 1,
				unit: 'fraction of the specification range',
				regions: missing,
			})
		}
	}

	// Negative absorbance
	if (min < NEGATIVE_WARNING_ABSORBANCE) {
		const blocking = min < NEGATIVE_INCONCLUSIVE_ABSORBANCE
		const negative = new Uint8Array(n)
		for (let i = 0; i < n; i++) negative[i] = y[i]! < NEGATIVE_WARNING_ABSORBANCE && inRange(x[i]!) ? 1 : 0
		flags.push({
			code: 'negative-absorbance',
			severity: blocking ? 'critical' : 'warning',
			makesInconclusive: blocking,
			excludedFromMetrics: false,
			message: `absorbance falls to ${min.toFixed(3)} (transmittance ${(100 * 10 ** -min).toFixed(0)} %): check the background`,
			value: min,
			limit: blocking ? NEGATIVE_INCONCLUSIVE_ABSORBANCE : NEGATIVE_WARNING_ABSORBANCE,
			unit: 'absorbance',
			regions: maskRegions(x, negative),
		})
	}
	return { flags, saturatedMask, noise }
}

/**
 * Mark saturated points: absorbance ≥ `limit` (or not finite), clipped runs at the maximum, and the tops of
 * flat-topped strong bands (the stray-light floor of an over-absorbing band). Returns a mask per input point.
 */
export function detectSaturation(
	spectrum: Spectrum,
	limit: number = SATURATION_ABSORBANCE,
	peaks?: ReadonlyArray<Peak>,
): Uint8Array {
	const { x, y } = spectrum
	const n = x.length
	const mask = new Uint8Array(n)
	let max = -Infinity
	for (let i = 0; i < n; i++) {
		if (!Number.isFinite(y[i]!) || y[i]! >= limit) mask[i] = 1
		else if (y[i]! > max) max = y[i]!
	}
	// Clipped runs of identical values at the maximum.
	let runStart = 0
	for (let i = 1; i <= n; i++) {
		if (i < n && y[i] === y[runStart]) continue
		if (i - runStart >= CLIPPED_RUN_POINTS && y[runStart]! >= max) for (let k = runStart; k < i; k++) mask[k] = 1
		runStart = i
	}
	// Flat-topped strong bands.
	if (n >= 7) {
		let span = 0
		if (peaks) {
			let lowest = Infinity
			for (let i = 0; i < n; i++) if (Number.isFinite(y[i]!) && y[i]! < lowest) lowest = y[i]!
			span = max - lowest
		}
		const strong = peaks
			? peaks.filter((p) => p.prominence >= FLAT_TOP_MIN_RELATIVE_PROMINENCE * span)
			: pickPeaks(spectrum, { minRelativeProminence: FLAT_TOP_MIN_RELATIVE_PROMINENCE })
		for (const peak of strong) {
			if (peak.intensity >= limit) continue
			const level = peak.intensity - 0.1 * peak.prominence
			let left = peak.index
			while (left > 0 && y[left - 1]! >= level) left--
			let right = peak.index
			while (right < n - 1 && y[right + 1]! >= level) right++
			const topWidth = x[right]! - x[left]!
			if (right - left >= 4 && peak.width > 0 && topWidth / peak.width >= FLAT_TOP_RATIO) {
				for (let k = left; k <= right; k++) mask[k] = 1
			}
		}
	}
	return mask
}

/**
 * Noise RMS (absorbance) in the flattest candidate window inside `range`: residual RMS after a straight-line fit,
 * so a sloping baseline does not count as noise. Null when no candidate window has at least 8 points in range.
 */
export function estimateNoise(spectrum: Spectrum, range?: Region): { rms: number; region: Region } | null {
	let best: { rms: number; region: Region } | null = null
	for (const window of NOISE_WINDOWS) {
		if (range && (window.from < range.from || window.to > range.to)) continue
		const rms = detrendedRms(spectrum, window)
		if (rms !== null && (!best || rms < best.rms)) best = { rms, region: window }
	}
	return best
}

function detrendedRms(spectrum: Spectrum, window: Region): number | null {
	const { start, end } = indexRange(spectrum.x, window.from, window.to)
	const count = end - start
	if (count < 8) return null
	let sx = 0
	let sy = 0
	let sxx = 0
	let sxy = 0
	for (let i = start; i < end; i++) {
		const xi = spectrum.x[i]!
		const yi = spectrum.y[i]!
		if (!Number.isFinite(yi)) return null
		sx += xi
		sy += yi
		sxx += xi * xi
		sxy += xi * yi
	}
	const denominator = count * sxx - sx * sx
	const slope = denominator !== 0 ? (count * sxy - sx * sy) / denominator : 0
	const intercept = (sy - slope * sx) / count
	let sum = 0
	for (let i = start; i < end; i++) {
		const r = spectrum.y[i]! - (intercept + slope * spectrum.x[i]!)
		sum += r * r
	}
	return Math.sqrt(sum / count)
}

/**
 * Largest deviation (absorbance) between 2300 and 2380 cm⁻¹ from a straight line joining the mean levels of the
 * 2250–2280 and 2400–2430 cm⁻¹ shoulders; null when those shoulders are not covered. Catches the CO₂
 * P/R-branch doublet whether it points up (in the sample) or down (in the background).
 */
export function co2Amplitude(spectrum: Spectrum): number | null {
	const left = meanIn(spectrum, 2250, 2280)
	const right = meanIn(spectrum, 2400, 2430)
	if (left === null || right === null) return null
	const x0 = 2265
	const x1 = 2415
	let worst = 0
	const { start, end } = indexRange(spectrum.x, 2300, 2380)
	for (let i = start; i < end; i++) {
		const base = left + ((right - left) * (spectrum.x[i]! - x0)) / (x1 - x0)
		worst = Math.max(worst, Math.abs(spectrum.y[i]! - base))
	}
	return worst
}

function meanIn(spectrum: Spectrum, from: number, to: number): number | null {
	const { start, end } = indexRange(spectrum.x, from, to)
	let sum = 0
	for (let i = start; i < end; i++) sum += spectrum.y[i]!
	return end > start ? sum / (end - start) : null
}

/** Contiguous runs of 1 in `mask`, as wavenumber regions. */
export function maskRegions(x: Float64Array, mask: Uint8Array): Array<Region> {
	const regions: Array<Region> = []
	let start = -1
	for (let i = 0; i <= x.length; i++) {
		const on = i < x.length && mask[i] === 1
		if (on && start < 0) start = i
		if (!on && start >= 0) {
			regions.push({ from: x[start]!, to: x[i - 1]! })
			start = -1
		}
	}
	return regions
}

function formatRegion(region: Region): string {
	return `${region.from.toFixed(0)}–${region.to.toFixed(0)} cm⁻¹`
}
