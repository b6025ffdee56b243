/**
 * Peak picking on absorbance spectra: local maxima filtered by topographic prominence, with the full width at
 * half prominence (FWHM) and a broad/sharp class. Written here because the installed peak package (ml-gsd)
 * finds peaks by second derivative and reports no prominence, which the product needs to rank bands.
 * Pure and deterministic; x in cm⁻¹ (ascending), y in absorbance.
 */
import { isEquallySpaced, median, medianSpacing, type Region, smooth } from '#shared/spectra/preprocess.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

export type PeakShape = 'broad' | 'sharp'

export type Peak = {
	/** Band maximum in cm⁻¹, refined by a parabola through the three highest points. */
	position: number
	/** Absorbance at the maximum (of the data the peak was picked on). */
	intensity: number
	/** Height above the higher of the two bases (topographic prominence), in absorbance. */
	prominence: number
	/** Full width at half prominence in cm⁻¹ (linear interpolation between points). */
	width: number
	/** 'broad' when `width` ≥ the broad threshold (BROAD_BAND_FWHM unless overridden). */
	shape: PeakShape
	/** Index of the highest point in the spectrum's arrays. */
	index: number
	/** Where the prominence was measured from: the lowest points between this peak and a higher one, cm⁻¹. */
	leftBase: number
	rightBase: number
}

/**
 * A band with a full width at half prominence of at least this many cm⁻¹ is 'broad' (hydrogen-bonded O–H
 * and N–H stretches are hundreds of cm⁻¹ wide; most fundamental bands of condensed phases are 5–40 cm⁻¹).
 * Common practice, no source.
 */
export const BROAD_BAND_FWHM = 60

/** Default minimum prominence as a fraction of the spectrum's absorbance span (max − min). Common practice, no source. */
export const DEFAULT_MIN_RELATIVE_PROMINENCE = 0.01

/** Default minimum prominence in multiples of the estimated noise standard deviation. Common practice, no source. */
export const DEFAULT_NOISE_FACTOR = 6

/** Smoothing span used before picking, in cm⁻¹: about one typical resolution element. */
export const PEAK_SMOOTHING_SPAN = 8

export type PeakOptions = {
	/** Absolute minimum prominence in absorbance (default 0). */
	minProminence?: number
	/** Minimum prominence as a fraction of the absorbance span inside `region` (default 0.01). */
	minRelativeProminence?: number
	/** Minimum prominence in multiples of the noise σ (default 6). */
	noiseFactor?: number
	/** Savitzky–Golay smoothing before picking (default: cubic over ≈8 cm⁻¹ when that is ≥ 5 points; null = none). */
	smoothing?: { windowSize: number; polynomial: number } | null
	/** Only report peaks inside this region. */
	region?: Region
	/** Never report peaks inside these regions (e.g. CO₂). */
	exclusionRegions?: ReadonlyArray<Region>
	/** FWHM threshold for 'broad' (default BROAD_BAND_FWHM). */
	broadWidth?: number
}

/**
 * Robust noise standard deviation of `y` from the median absolute second difference:
 * σ ≈ 1.4826 · median|Δ²y| / √6, which real bands barely affect because they cover a minority of points.
 * Absorbance units. Zero for fewer than 3 points.
 */
export function estimateNoiseSigma(y: ArrayLike<number>): number {
	const n = y.length
	if (n < 3) return 0
	const d2 = new Float64Array(n - 2)
	for (let i = 1; i < n - 1; i++) d2[i - 1] = Math.abs(y[i + 1]! - 2 * y[i]! + y[i - 1]!)
	return (1.4826 * median(d2)) / Math.sqrt(6)
}

/** Savitzky–Golay window (odd, ≥ 5 points) that spans about `span` cm⁻¹ on an axis of step `step`; null if < 5 points. */
export function windowForSpan(span: number, step: number): number | null {
	let points = Math.round(span / step)
	if (points % 2 === 0) points += 1
	return points >= 5 ? points : null
}

/**
 * Pick peaks (absorbance maxima) with their prominence and FWHM, sorted by ascending position.
 * A peak is kept when its prominence clears every threshold in `options`. Flat tops (clipped data) count as one
 * peak at the middle of the plateau. Pure; the input is not modified.
 */
export function pickPeaks(spectrum: Spectrum, options: PeakOptions = {}): Array<Peak> {
	const { x } = spectrum
	const n = x.length
	if (n < 3) return []
	let y = spectrum.y
	const smoothing = options.smoothing === undefined ? defaultSmoothing(spectrum) : options.smoothing
	if (smoothing && isEquallySpaced(x)) y = smooth(spectrum, smoothing).y

	let lo = 0
	let hi = n - 1
	if (options.region) {
		while (lo < n && x[lo]! < options.region.from) lo++
		while (hi >= 0 && x[hi]! > options.region.to) hi--
	}
	let min = Infinity
	let max = -Infinity
	for (let i = lo; i <= hi; i++) {
		const v = y[i]!
		if (v < min) min = v
		if (v > max) max = v
	}
	const span = max > min ? max - min : 0
	const noise = estimateNoiseSigma(y)
	const threshold = Math.max(
		options.minProminence ?? 0,
		(options.minRelativeProminence ?? DEFAULT_MIN_RELATIVE_PROMINENCE) * span,
		(options.noiseFactor ?? DEFAULT_NOISE_FACTOR) * noise,
		Number.MIN_VALUE,
	)
	const broadWidth = options.broadWidth ?? BROAD_BAND_FWHM
	const exclusions = options.exclusionRegions ?? []

	const peaks: Array<Peak> = []
	let i = 1
	while (i < n - 1) {
		if (!(y[i]! > y[i - 1]!)) {
			i++
			continue
		}
		// Walk over a plateau of equal values.
		let j = i
		while (j < n - 1 && y[j + 1] === y[i]) j++
		if (j >= n - 1 || !(y[j + 1]! < y[i]!)) {
			i = j + 1
			continue
		}
		const top = Math.floor((i + j) / 2)
		const plateauStart = i
		i = j + 1
		if (x[top]! < (options.region?.from ?? -Infinity) || x[top]! > (options.region?.to ?? Infinity)) continue
		if (exclusions.some((r) => x[top]! >= r.from && x[top]! <= r.to)) continue
		const bases = findBases(y, top, j)
		if (y[top]! - Math.max(y[bases.left]!, y[bases.right]!) < threshold) continue
		peaks.push(measurePeak(x, y, top, plateauStart, j, bases, broadWidth))
	}
	return peaks
}

function defaultSmoothing(spectrum: Spectrum): { windowSize: number; polynomial: number } | null {
	if (spectrum.x.length < 7) return null
	const window = windowForSpan(PEAK_SMOOTHING_SPAN, medianSpacing(spectrum.x))
	return window ? { windowSize: window, polynomial: 3 } : null
}

/** Lowest points on each side before reaching a strictly higher point (or the edge): the prominence bases. */
function findBases(y: Float64Array, top: number, plateauEnd: number): { left: number; right: number } {
	const height = y[top]!
	let left = top
	for (let k = top - 1; k >= 0; k--) {
		const v = y[k]!
		if (v > height) break
		if (v < y[left]!) left = k
	}
	let right = top
	for (let k = plateauEnd + 1; k < y.length; k++) {
		const v = y[k]!
		if (v > height) break
		if (v < y[right]!) right = k
	}
	return { left, right }
}

function measurePeak(
	x: Float64Array,
	y: Float64Array,
	top: number,
	plateauStart: number,
	plateauEnd: number,
	bases: { left: number; right: number },
	broadWidth: number,
): Peak {
	const n = y.length
	const height = y[top]!
	const leftMinIndex = bases.left
	const rightMinIndex = bases.right
	const base = Math.max(y[leftMinIndex]!, y[rightMinIndex]!)
	const prominence = height - base
	const half = height - prominence / 2
	// Half-prominence crossings, searched outwards but not past the bases.
	let k = top
	while (k > leftMinIndex && y[k]! > half) k--
	const leftX = crossing(x, y, k, k + 1, half)
	k = plateauEnd
	while (k < rightMinIndex && y[k]! > half) k++
	const rightX = crossing(x, y, k - 1, k, half)
	const width = Math.max(0, rightX - leftX)

	let position = x[top]!
	let intensity = height
	if (plateauStart === plateauEnd && top > 0 && top < n - 1) {
		const ym = y[top - 1]!
		const y0 = y[top]!
		const yp = y[top + 1]!
		const denominator = ym - 2 * y0 + yp
		if (denominator < 0) {
			const offset = (0.5 * (ym - yp)) / denominator // in points, within (−0.5, 0.5) for a true maximum
			const step = offset >= 0 ? x[top + 1]! - x[top]! : x[top]! - x[top - 1]!
			position = x[top]! + offset * step
			intensity = y0 - 0.25 * (ym - yp) * offset
		}
	} else if (plateauEnd > plateauStart) {
		position = (x[plateauStart]! + x[plateauEnd]!) / 2
	}
	return {
		position,
		intensity,
		prominence,
		width,
		shape: width >= broadWidth ? 'broad' : 'sharp',
		index: top,
		leftBase: x[leftMinIndex]!,
		rightBase: x[rightMinIndex]!,
	}
}

/** x where the segment (i0, i1) crosses `level` (linear); the nearer end when the segment is flat. */
function crossing(x: Float64Array, y: Float64Array, i0: number, i1: number, level: number): number {
	const a = Math.max(0, i0)
	const b = Math.min(x.length - 1, i1)
	const ya = y[a]!
	const yb = y[b]!
	if (ya === yb) return (x[a]! + x[b]!) / 2
	const t = Math.min(1, Math.max(0, (level - ya) / (yb - ya)))
	return x[a]! + t * (x[b]! - x[a]!)
}

/** The peak nearest to `position` (cm⁻¹) within ±`tolerance`, or null. Ties go to the more prominent peak. */
export function nearestPeak(peaks: ReadonlyArray<Peak>, position: number, tolerance: number): Peak | null {
	let best: Peak | null = null
	for (const peak of peaks) {
		const distance = Math.abs(peak.position - position)
		if (distance > tolerance) continue
		if (
			!best ||
			distance < Math.abs(best.position - position) ||
			(distance === Math.abs(best.position - position) && peak.prominence > best.prominence)
		) {
			best = peak
		}
	}
	return best
}
