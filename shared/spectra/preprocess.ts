/**
 * Preprocessing: common grid, baseline correction, Savitzky–Golay smoothing and derivatives,
 * normalisation and inclusion masks. Pure and deterministic; x in cm⁻¹ (strictly ascending), y in absorbance.
 * Nothing here resamples silently: every function that changes the axis says so in its name.
 */
import airPLS from 'ml-airpls'
import savitzkyGolayModule from 'ml-savitzky-golay'
import { xyInterpolateLinear } from 'ml-spectra-processing'

import { DomainError, err, ok, type Result } from '#shared/errors.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

/**
 * Version of the spectral engine (preprocessing, quality, peaks, groups, similarity, comparison, polystyrene
 * check, search). Stored results record it as `algorithmVersion`; bump it whenever any number an engine
 * function returns for the same input and parameters could change.
 */
export const ENGINE_VERSION = '1.0.0'

/** A closed wavenumber interval in cm⁻¹ with `from < to`; `label` says why it exists (e.g. 'atmospheric CO₂'). */
export type Region = { from: number; to: number; label?: string }

/**
 * Atmospheric CO₂ antisymmetric stretch (band centre 2349 cm⁻¹, P and R branches ≈2360/≈2340 in FTIR
 * backgrounds; FACTS.md §6.8). The 2400–2280 cm⁻¹ window is the product default (issue 3, item 2).
 */
export const CO2_EXCLUSION: Region = { from: 2280, to: 2400, label: 'atmospheric CO₂' }

/** Regions left out of every comparison unless a specification says otherwise. */
export const DEFAULT_EXCLUSION_REGIONS: ReadonlyArray<Region> = [CO2_EXCLUSION]

/** Relative tolerance on point spacing below which an axis counts as equally spaced (Savitzky–Golay needs it). */
export const UNIFORM_SPACING_TOLERANCE = 0.01

/** The two spectra share no wavenumber range, so they cannot be compared point by point. */
export class NoOverlap extends DomainError {
	constructor(message = 'the spectra do not overlap in wavenumber') {
		super(message, 422)
	}
}

type SavitzkyGolayFn = (
	data: ArrayLike<number>,
	h: number,
	options: { windowSize: number; derivative: number; polynomial: number; pad: 'post'; padValue: 'replicate' },
) => Array<number>

// NOTE: ml-savitzky-golay 5 is CommonJS. Under Node ESM its default import arrives as `{ default: fn }`,
// under a bundler as `fn` itself; accept both.
const savitzkyGolay: SavitzkyGolayFn = (() => {
	const candidate: unknown = savitzkyGolayModule
	if (typeof candidate === 'function') return candidate as SavitzkyGolayFn
	const inner: unknown = (candidate as { default?: unknown }).default
	if (typeof inner === 'function') return inner as SavitzkyGolayFn
	throw new Error('ml-savitzky-golay did not export a function')
})()

/**
 * Median of `values` in O(n) expected time (quickselect on a copy; the input is not modified).
 * For an even count, the upper of the two middle values. NaN for an empty input.
 */
export function median(values: ArrayLike<number>): number {
	const n = values.length
	if (n === 0) return Number.NaN
	const a = Float64Array.from(values)
	const k = Math.floor(n / 2)
	let lo = 0
	let hi = n - 1
	while (lo < hi) {
		const pivot = a[(lo + hi) >> 1]!
		let i = lo
		let j = hi
		while (i <= j) {
			while (a[i]! < pivot) i++
			while (a[j]! > pivot) j--
			if (i <= j) {
				const t = a[i]!
				a[i] = a[j]!
				a[j] = t
				i++
				j--
			}
		}
		if (k <= j) hi = j
		else if (k >= i) lo = i
		else break
	}
	return a[k]!
}

/**
 * Median spacing between consecutive x values, in cm⁻¹. Robust to the odd irregular step.
 * For an axis whose steps all agree to 1e-9 (relative) this is the mean step, found in one pass.
 * Requires at least two points.
 */
export function medianSpacing(x: Float64Array): number {
	const n = x.length
	if (n < 2) throw new RangeError('need at least two points to measure spacing')
	const mean = (x[n - 1]! - x[0]!) / (n - 1)
	let uniform = true
	for (let i = 1; i < n; i++) {
		if (Math.abs(x[i]! - x[i - 1]! - mean) > 1e-9 * Math.abs(mean)) {
			uniform = false
			break
		}
	}
	if (uniform) return mean
	const steps = new Float64Array(n - 1)
	for (let i = 1; i < n; i++) steps[i - 1] = x[i]! - x[i - 1]!
	return median(steps)
}

/** True when every step of `x` is within `UNIFORM_SPACING_TOLERANCE` (relative) of the mean step. One pass. */
export function isEquallySpaced(x: Float64Array): boolean {
	const n = x.length
	if (n < 3) return true
	const mean = (x[n - 1]! - x[0]!) / (n - 1)
	const tolerance = UNIFORM_SPACING_TOLERANCE * Math.abs(mean)
	for (let i = 1; i < n; i++) {
		if (Math.abs(x[i]! - x[i - 1]! - mean) > tolerance) return false
	}
	return true
}

/**
 * Half-open index range [start, end) of the points of ascending `x` with from ≤ x ≤ to (binary search).
 * Empty (start = end) when none.
 */
export function indexRange(x: Float64Array, from: number, to: number): { start: number; end: number } {
	let lo = 0
	let hi = x.length
	while (lo < hi) {
		const mid = (lo + hi) >> 1
		if (x[mid]! < from) lo = mid + 1
		else hi = mid
	}
	const start = lo
	hi = x.length
	while (lo < hi) {
		const mid = (lo + hi) >> 1
		if (x[mid]! <= to) lo = mid + 1
		else hi = mid
	}
	return { start, end: Math.max(start, lo) }
}

/** The wavenumber interval both spectra cover, or null when they do not overlap (cm⁻¹). */
export function overlapRange(a: Spectrum, b: Spectrum): Region | null {
	const from = Math.max(a.x[0]!, b.x[0]!)
	const to = Math.min(a.x[a.x.length - 1]!, b.x[b.x.length - 1]!)
	return to > from ? { from, to } : null
}

/** Intersection of two regions, or null when they do not meet. */
export function intersectRegions(a: Region, b: Region): Region | null {
	const from = Math.max(a.from, b.from)
	const to = Math.min(a.to, b.to)
	return to > from ? { from, to } : null
}

/**
 * An equally spaced grid `from, from + step, …` up to and including `to` (within 1e-9 of a step).
 * The last point never exceeds `to`, so a grid built inside an overlap never needs extrapolation.
 */
export function makeGrid(from: number, to: number, step: number): Float64Array {
	if (!(step > 0) || !(to >= from)) throw new RangeError(`invalid grid ${from}–${to} step ${step}`)
	const count = Math.floor((to - from) / step + 1e-9) + 1
	const grid = new Float64Array(count)
	for (let i = 0; i < count; i++) grid[i] = from + i * step
	return grid
}

/**
 * Linear interpolation of `spectrum` onto `grid` (cm⁻¹, ascending). Every grid point must lie inside the
 * spectrum's own range: this function never extrapolates (a RangeError otherwise, since that is a caller bug).
 */
export function resample(spectrum: Spectrum, grid: Float64Array): Spectrum {
	const first = spectrum.x[0]!
	const last = spectrum.x[spectrum.x.length - 1]!
	const slack = 1e-9 * Math.max(1, Math.abs(last))
	if (grid.length > 0 && (grid[0]! < first - slack || grid[grid.length - 1]! > last + slack)) {
		throw new RangeError(`grid ${grid[0]}–${grid[grid.length - 1]} lies outside the spectrum ${first}–${last}`)
	}
	return { x: grid, y: xyInterpolateLinear({ x: spectrum.x, y: spectrum.y }, grid) }
}

export type CommonGridOptions = {
	/** Grid step in cm⁻¹; default: the coarser of the two median spacings, so neither spectrum is upsampled. */
	step?: number
	/** Restrict the grid to this range as well as to the overlap (e.g. the specification's range). */
	range?: Region
}

export type CommonGrid = { grid: Float64Array; step: number; range: Region; a: Spectrum; b: Spectrum }

/**
 * Resample two spectra onto one equally spaced grid over their overlap (linear interpolation).
 * Fails with NoOverlap when the spectra (restricted to `range`) share fewer than 3 grid points.
 */
export function resampleToCommonGrid(
	a: Spectrum,
	b: Spectrum,
	options: CommonGridOptions = {},
): Result<CommonGrid, NoOverlap> {
	const overlap = overlapRange(a, b)
	const range = overlap && options.range ? intersectRegions(overlap, options.range) : overlap
	if (!range) return err(new NoOverlap())
	const step = options.step ?? Math.max(medianSpacing(a.x), medianSpacing(b.x))
	const grid = makeGrid(range.from, range.to, step)
	if (grid.length < 3)
		return err(new NoOverlap(`the spectra overlap over only ${(range.to - range.from).toFixed(1)} cm⁻¹`))
	return ok({ grid, step, range, a: resample(a, grid), b: resample(b, grid) })
}

/**
 * Restrict a spectrum to the points inside `region` (no interpolation). Returns a copy.
 */
export function cropSpectrum(spectrum: Spectrum, region: Region): Spectrum {
	let start = 0
	while (start < spectrum.x.length && spectrum.x[start]! < region.from) start++
	let end = spectrum.x.length
	while (end > start && spectrum.x[end - 1]! > region.to) end--
	return { x: spectrum.x.slice(start, end), y: spectrum.y.slice(start, end) }
}

export type BaselineOptions =
	| { method: 'none' }
	/** airPLS (Zhang et al. 2010) as implemented by ml-airpls; lambda is that package's smoothness factor, default 10. */
	| { method: 'airpls'; lambda?: number; maxIterations?: number }
	/** Asymmetric least squares (Eilers & Boelens 2005); lambda default 1e5, p (asymmetry) default 0.01. */
	| { method: 'als'; lambda?: number; p?: number; iterations?: number }

export const DEFAULT_AIRPLS_LAMBDA = 10
export const DEFAULT_ALS_LAMBDA = 1e5
export const DEFAULT_ALS_P = 0.01
export const DEFAULT_ALS_ITERATIONS = 10

/**
 * Estimate and subtract a baseline. Returns the corrected spectrum (same x) and the baseline itself, both in
 * absorbance. `method: 'none'` returns a copy and a zero baseline. Deterministic for given options.
 */
export function correctBaseline(
	spectrum: Spectrum,
	options: BaselineOptions,
): { corrected: Spectrum; baseline: Float64Array } {
	const n = spectrum.y.length
	switch (options.method) {
		case 'none':
			return { corrected: { x: spectrum.x, y: spectrum.y.slice() }, baseline: new Float64Array(n) }
		case 'airpls': {
			const result = airPLS(spectrum.x, spectrum.y, {
				lambda: options.lambda ?? DEFAULT_AIRPLS_LAMBDA,
				maxIterations: options.maxIterations ?? 100,
			})
			const baseline = Float64Array.from(result.baseline)
			const y = new Float64Array(n)
			for (let i = 0; i < n; i++) y[i] = spectrum.y[i]! - baseline[i]!
			return { corrected: { x: spectrum.x, y }, baseline }
		}
		case 'als': {
			const baseline = asymmetricLeastSquares(spectrum.y, {
				lambda: options.lambda ?? DEFAULT_ALS_LAMBDA,
				p: options.p ?? DEFAULT_ALS_P,
				iterations: options.iterations ?? DEFAULT_ALS_ITERATIONS,
			})
			const y = new Float64Array(n)
			for (let i = 0; i < n; i++) y[i] = spectrum.y[i]! - baseline[i]!
			return { corrected: { x: spectrum.x, y }, baseline }
		}
	}
}

/**
 * Asymmetric least squares baseline (Eilers & Boelens, 2005): minimise Σ wᵢ(yᵢ − zᵢ)² + λ Σ (Δ²zᵢ)² with
 * wᵢ = p where yᵢ > zᵢ (peaks) and 1 − p elsewhere, re-weighting `iterations` times. Written here because
 * the installed packages offer airPLS and an adaptive Whittaker smoother but not this classic form.
 * The normal equations are pentadiagonal and symmetric positive definite, solved by banded LDLᵀ in O(n).
 */
export function asymmetricLeastSquares(
	y: Float64Array,
	options: { lambda: number; p: number; iterations: number },
): Float64Array {
	const n = y.length
	const z = new Float64Array(n)
	if (n < 3) {
		z.set(y)
		return z
	}
	const { lambda, p, iterations } = options
	const w = new Float64Array(n).fill(1)
	// Bands of D'D for the second-difference operator D ((n−2)×n, rows [1, −2, 1]).
	const d0 = new Float64Array(n)
	const d1 = new Float64Array(n - 1)
	const d2 = new Float64Array(n - 2)
	for (let k = 0; k < n - 2; k++) {
		d0[k]! += 1
		d0[k + 1]! += 4
		d0[k + 2]! += 1
		d1[k]! += -2
		d1[k + 1]! += -2
		d2[k]! += 1
	}
	const diag = new Float64Array(n)
	const rhs = new Float64Array(n)
	for (let iteration = 0; iteration < iterations; iteration++) {
		for (let i = 0; i < n; i++) {
			diag[i] = w[i]! + lambda * d0[i]!
			rhs[i] = w[i]! * y[i]!
		}
		solvePentadiagonal(diag, d1, d2, lambda, rhs, z)
		for (let i = 0; i < n; i++) w[i] = y[i]! > z[i]! ? p : 1 - p
	}
	return z
}

/** Solve A z = b for symmetric pentadiagonal A = diag + λ·(off1, off2) by LDLᵀ without pivoting (A is SPD). */
function solvePentadiagonal(
	diag: Float64Array,
	off1: Float64Array,
	off2: Float64Array,
	lambda: number,
	b: Float64Array,
	out: Float64Array,
): void {
	const n = diag.length
	const d = new Float64Array(n)
	const l1 = new Float64Array(n) // L[i][i-1]
	const l2 = new Float64Array(n) // L[i][i-2]
	for (let i = 0; i < n; i++) {
		const a2 = i >= 2 ? lambda * off2[i - 2]! : 0
		const a1 = i >= 1 ? lambda * off1[i - 1]! : 0
		const m2 = i >= 2 ? a2 / d[i - 2]! : 0
		l2[i] = m2
		const m1 = i >= 1 ? (a1 - (i >= 2 ? m2 * d[i - 2]! * l1[i - 1]! : 0)) / d[i - 1]! : 0
		l1[i] = m1
		d[i] = diag[i]! - (i >= 1 ? m1 * m1 * d[i - 1]! : 0) - (i >= 2 ? m2 * m2 * d[i - 2]! : 0)
	}
	// Forward: L u = b
	const u = out
	for (let i = 0; i < n; i++) {
		u[i] = b[i]! - (i >= 1 ? l1[i]! * u[i - 1]! : 0) - (i >= 2 ? l2[i]! * u[i - 2]! : 0)
	}
	for (let i = 0; i < n; i++) u[i] = u[i]! / d[i]!
	// Backward: Lᵀ z = u
	for (let i = n - 1; i >= 0; i--) {
		u[i] = u[i]! - (i + 1 < n ? l1[i + 1]! * u[i + 1]! : 0) - (i + 2 < n ? l2[i + 2]! * u[i + 2]! : 0)
	}
}

/** Savitzky–Golay window and polynomial order. The window is an odd number of points ≥ 5. */
export type SavitzkyGolayOptions = { windowSize: number; polynomial: number }

/** Light smoothing for peak picking: 9 points, quadratic (common practice, no source). */
export const DEFAULT_SMOOTHING: SavitzkyGolayOptions = { windowSize: 9, polynomial: 2 }

/** First derivative for derivative correlation: 9 points, quadratic (common practice, no source). */
export const DEFAULT_DERIVATIVE: SavitzkyGolayOptions = { windowSize: 9, polynomial: 2 }

/**
 * Savitzky–Golay smoothing (Savitzky & Golay 1964) via ml-savitzky-golay, same length as the input (edges
 * padded by replication). Requires an equally spaced axis. Returns a new spectrum on the same x.
 */
export function smooth(spectrum: Spectrum, options: SavitzkyGolayOptions = DEFAULT_SMOOTHING): Spectrum {
	return { x: spectrum.x, y: savitzkyGolayFilter(spectrum, options, 0) }
}

/**
 * Savitzky–Golay first derivative dA/dν̃ in absorbance per cm⁻¹, same length as the input.
 * Requires an equally spaced axis (the step is the median spacing).
 */
export function firstDerivative(spectrum: Spectrum, options: SavitzkyGolayOptions = DEFAULT_DERIVATIVE): Float64Array {
	return savitzkyGolayFilter(spectrum, options, 1)
}

/** Savitzky–Golay second derivative d²A/dν̃² per cm⁻², same length as the input; bands show as minima. */
export function secondDerivative(
	spectrum: Spectrum,
	options: SavitzkyGolayOptions = { windowSize: 7, polynomial: 3 },
): Float64Array {
	return savitzkyGolayFilter(spectrum, options, 2)
}

function savitzkyGolayFilter(spectrum: Spectrum, options: SavitzkyGolayOptions, derivative: number): Float64Array {
	const n = spectrum.y.length
	if (!isEquallySpaced(spectrum.x))
		throw new RangeError('Savitzky–Golay filtering needs an equally spaced axis: resample first')
	const windowSize = Math.min(options.windowSize, n % 2 === 1 ? n : n - 1)
	if (windowSize < 5) return derivative === 0 ? spectrum.y.slice() : new Float64Array(n)
	const polynomial = Math.min(options.polynomial, windowSize - 2)
	// NOTE: without `pad` the package returns n − windowSize + 1 values.
	const out = savitzkyGolay(spectrum.y, medianSpacing(spectrum.x), {
		windowSize,
		polynomial,
		derivative,
		pad: 'post',
		padValue: 'replicate',
	})
	return Float64Array.from(out)
}

export type NormalisationMethod = 'none' | 'max' | 'unit-vector' | 'snv'

/**
 * Scale `y` (optionally only over points where `mask` is 1; other points are scaled the same way):
 * 'max' → largest value 1; 'unit-vector' → Euclidean norm 1; 'snv' → mean 0 and standard deviation 1.
 * Returns a copy; a flat or empty input is returned unchanged (the scale would be undefined).
 */
export function normalise(y: Float64Array, method: NormalisationMethod, mask?: Uint8Array): Float64Array {
	const out = y.slice()
	if (method === 'none') return out
	let count = 0
	let max = -Infinity
	let sum = 0
	let sumSquares = 0
	for (let i = 0; i < y.length; i++) {
		if (mask && !mask[i]) continue
		const v = y[i]!
		count++
		if (v > max) max = v
		sum += v
		sumSquares += v * v
	}
	if (count === 0) return out
	let offset = 0
	let scale = 1
	if (method === 'max') scale = max > 0 ? 1 / max : 1
	else if (method === 'unit-vector') scale = sumSquares > 0 ? 1 / Math.sqrt(sumSquares) : 1
	else {
		offset = sum / count
		const variance = sumSquares / count - offset * offset
		scale = variance > 0 ? 1 / Math.sqrt(variance) : 1
	}
	for (let i = 0; i < out.length; i++) out[i] = (out[i]! - offset) * scale
	return out
}

/**
 * 1 for grid points inside `range` (when given) and outside every exclusion region, else 0.
 * Region bounds are inclusive on both sides.
 */
export function inclusionMask(
	x: Float64Array,
	options: { range?: Region; exclusionRegions?: ReadonlyArray<Region> } = {},
): Uint8Array {
	const mask = new Uint8Array(x.length)
	const exclusions = options.exclusionRegions ?? []
	for (let i = 0; i < x.length; i++) {
		const v = x[i]!
		if (options.range && (v < options.range.from || v > options.range.to)) continue
		let excluded = false
		for (const region of exclusions) {
			if (v >= region.from && v <= region.to) {
				excluded = true
				break
			}
		}
		if (!excluded) mask[i] = 1
	}
	return mask
}

/** Number of ones in a mask. */
export function countIncluded(mask: Uint8Array): number {
	let count = 0
	for (let i = 0; i < mask.length; i++) count += mask[i]! ? 1 : 0
	return count
}
