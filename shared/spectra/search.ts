/**
 * Library search and specificity. A library is prepared once: every reference is resampled onto one grid
 * (linear interpolation), restricted to the included points (exclusion regions removed), mean-centred and scaled
 * to unit norm, and packed row after row into ONE contiguous typed array. Ranking a sample is then a single dot
 * product per row — the Pearson correlation over the included points — so a search streams the buffer once and
 * is bound by memory bandwidth. Pure and deterministic.
 */
import { xyInterpolateLinear } from 'ml-spectra-processing'

import { DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'
import {
	DEFAULT_EXCLUSION_REGIONS,
	ENGINE_VERSION,
	inclusionMask,
	makeGrid,
	type Region,
} from '#shared/spectra/preprocess.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

export const SEARCH_ALGORITHM = 'mean-centred-unit-norm-dot-product'

/** Library grid: `from`, `from + step`, … ≤ `to`, cm⁻¹. */
export type LibraryGrid = { from: number; to: number; step: number }

/** 650–4000 cm⁻¹ (the BP range, FACTS.md §2.2 [READ]) at 1 cm⁻¹: 3351 points before exclusions. */
export const DEFAULT_LIBRARY_GRID: LibraryGrid = { from: 650, to: 4000, step: 1 }

export type LibraryEntry = {
	id: string
	spectrum: Spectrum
	/** Material the reference belongs to; specificity ignores references of the target's own material. Default: `id`. */
	material?: string
}

export type RowArray = Float32Array | Float64Array

export type PreparedLibrary = {
	ids: Array<string>
	materials: Array<string>
	/** Number of rows (references). */
	count: number
	/** The full grid (cm⁻¹) and the indices of its included points, in order. */
	grid: Float64Array
	included: Uint32Array
	/** Values per row = included.length. */
	rowLength: number
	/** count × rowLength values, row-major: each row mean-centred and unit-norm over the points its reference covers. */
	data: RowArray
	/** Fraction of included points each reference covers (uncovered points are 0 after centring). */
	coverage: Float64Array
	exclusionRegions: ReadonlyArray<Region>
	precision: 'float32' | 'float64'
	algorithm: typeof SEARCH_ALGORITHM
	algorithmVersion: string
}

export type PrepareOptions = {
	grid?: LibraryGrid
	exclusionRegions?: ReadonlyArray<Region>
	/** float32 halves the bytes streamed per search; correlations then carry about 1e-6 rounding. Default float32. */
	precision?: 'float32' | 'float64'
}

/** The spectrum covers too little of the library grid, or is flat there. */
export class NotSearchable extends DomainError {
	constructor(message: string) {
		super(message, 422)
	}
}

/**
 * Entries supplied one at a time, so that a large library never needs all its source spectra in memory at once
 * (`entry(i)` is called exactly once per index, in order).
 */
export type LibrarySource = { count: number; entry: (index: number) => LibraryEntry }

/**
 * Prepare a library for searching. References that are flat on the grid, or cover none of it, get a zero row
 * (correlation 0 with everything) and coverage 0. Cost O(count × grid points); memory count × rowLength × 4 or 8 bytes.
 */
export function prepareLibrary(
	entries: ReadonlyArray<LibraryEntry> | LibrarySource,
	options: PrepareOptions = {},
): PreparedLibrary {
	const source: LibrarySource = Array.isArray(entries)
		? { count: entries.length, entry: (i) => (entries as ReadonlyArray<LibraryEntry>)[i]! }
		: (entries as LibrarySource)
	const gridSpec = options.grid ?? DEFAULT_LIBRARY_GRID
	const exclusionRegions = options.exclusionRegions ?? DEFAULT_EXCLUSION_REGIONS
	const grid = makeGrid(gridSpec.from, gridSpec.to, gridSpec.step)
	const mask = inclusionMask(grid, { exclusionRegions })
	const includedList: Array<number> = []
	for (let i = 0; i < grid.length; i++) if (mask[i]) includedList.push(i)
	const included = Uint32Array.from(includedList)
	const rowLength = included.length
	const precision = options.precision ?? 'float32'
	const count = source.count
	const data: RowArray =
		precision === 'float32' ? new Float32Array(count * rowLength) : new Float64Array(count * rowLength)
	const coverage = new Float64Array(count)
	const includedX = Float64Array.from(included, (i) => grid[i]!)
	const ids: Array<string> = []
	const materials: Array<string> = []
	for (let row = 0; row < count; row++) {
		const entry = source.entry(row)
		const prepared = normaliseOnGrid(entry.spectrum, includedX)
		coverage[row] = prepared.coverage
		data.set(prepared.values, row * rowLength)
		ids.push(entry.id)
		materials.push(entry.material ?? entry.id)
	}
	return {
		ids,
		materials,
		count,
		grid,
		included,
		rowLength,
		data,
		coverage,
		exclusionRegions,
		precision,
		algorithm: SEARCH_ALGORITHM,
		algorithmVersion: ENGINE_VERSION,
	}
}

/**
 * Resample `spectrum` at `xs` (ascending cm⁻¹), mean-centre and unit-normalise over the points it covers; points
 * outside its range are 0. Flat or uncovered spectra give all zeros.
 */
function normaliseOnGrid(spectrum: Spectrum, xs: Float64Array): { values: Float64Array; coverage: number } {
	const values = new Float64Array(xs.length)
	const first = spectrum.x[0]!
	const last = spectrum.x[spectrum.x.length - 1]!
	let lo = 0
	while (lo < xs.length && xs[lo]! < first) lo++
	let hi = xs.length
	while (hi > lo && xs[hi - 1]! > last) hi--
	const covered = hi - lo
	if (covered < 2) return { values, coverage: covered / Math.max(1, xs.length) }
	const inside = xyInterpolateLinear({ x: spectrum.x, y: spectrum.y }, xs.subarray(lo, hi))
	let sum = 0
	for (let i = 0; i < covered; i++) sum += inside[i]!
	const mean = sum / covered
	let squares = 0
	for (let i = 0; i < covered; i++) {
		const d = inside[i]! - mean
		inside[i] = d
		squares += d * d
	}
	if (squares > 0 && Number.isFinite(squares)) {
		const scale = 1 / Math.sqrt(squares)
		for (let i = 0; i < covered; i++) values[lo + i] = inside[i]! * scale
	}
	return { values, coverage: covered / xs.length }
}

/**
 * The sample prepared like a library row (same grid, exclusions, centring and norm). Always float64: the query
 * stays in cache, so its precision costs no bandwidth.
 * Fails when the sample covers less than half of the included grid or is flat on it.
 */
export function prepareQuery(library: PreparedLibrary, sample: Spectrum): Result<Float64Array, NotSearchable> {
	const xs = Float64Array.from(library.included, (i) => library.grid[i]!)
	const { values, coverage } = normaliseOnGrid(sample, xs)
	if (coverage < 0.5) {
		return err(new NotSearchable(`the sample covers only ${(100 * coverage).toFixed(0)} % of the library grid`))
	}
	let norm = 0
	for (let i = 0; i < values.length; i++) norm += values[i]! * values[i]!
	if (!(norm > 0)) return err(new NotSearchable('the sample is flat on the library grid'))
	return ok(values)
}

/**
 * Correlation of `query` (from prepareQuery) with every library row: one dot product per row, streaming
 * `library.data` once. Returns one score per row, in library order, in [−1, 1].
 */
export function scoreLibrary(library: PreparedLibrary, query: Float64Array): Float64Array {
	const { data, rowLength: length, count } = library
	if (query.length !== length) throw new RangeError(`query has ${query.length} values, rows have ${length}`)
	const scores = new Float64Array(count)
	const tail = length - (length % 4)
	// NOTE: two rows per pass share each query load, and four accumulators per row break the add dependency
	// chain; per-row subarrays let the engine drop bounds checks. This keeps the loop near the cost of a plain
	// summing pass over the same buffer (bench/engine.ts).
	let row = 0
	for (; row + 1 < count; row += 2) {
		const a = data.subarray(row * length, row * length + length)
		const b = data.subarray(row * length + length, row * length + 2 * length)
		let a0 = 0
		let a1 = 0
		let a2 = 0
		let a3 = 0
		let b0 = 0
		let b1 = 0
		let b2 = 0
		let b3 = 0
		for (let i = 0; i < tail; i += 4) {
			const q0 = query[i]!
			const q1 = query[i + 1]!
			const q2 = query[i + 2]!
			const q3 = query[i + 3]!
			a0 += a[i]! * q0
			a1 += a[i + 1]! * q1
			a2 += a[i + 2]! * q2
			a3 += a[i + 3]! * q3
			b0 += b[i]! * q0
			b1 += b[i + 1]! * q1
			b2 += b[i + 2]! * q2
			b3 += b[i + 3]! * q3
		}
		for (let i = tail; i < length; i++) {
			a0 += a[i]! * query[i]!
			b0 += b[i]! * query[i]!
		}
		scores[row] = clampUnit(a0 + a1 + a2 + a3)
		scores[row + 1] = clampUnit(b0 + b1 + b2 + b3)
	}
	for (; row < count; row++) {
		const a = data.subarray(row * length, row * length + length)
		let sum = 0
		for (let i = 0; i < length; i++) sum += a[i]! * query[i]!
		scores[row] = clampUnit(sum)
	}
	return scores
}

function clampUnit(value: number): number {
	return value > 1 ? 1 : value < -1 ? -1 : value
}

export type SearchHit = { id: string; material: string; correlation: number; rank: number; coverage: number }

export type SearchResult = {
	results: Array<SearchHit>
	algorithm: typeof SEARCH_ALGORITHM
	algorithmVersion: string
	params: { grid: LibraryGrid; points: number; exclusionRegions: ReadonlyArray<Region>; precision: string; top: number }
}

/**
 * Rank the library against `sample` by correlation, highest first (ties by library order). `top` limits the
 * results (default: all). A screening aid: a high rank is not an identification (FACTS.md §5.3).
 */
export function searchLibrary(
	library: PreparedLibrary,
	sample: Spectrum,
	options: { top?: number } = {},
): Result<SearchResult, NotSearchable> {
	const query = prepareQuery(library, sample)
	if (!query.ok) return query
	const scores = scoreLibrary(library, query.value)
	const top = Math.min(options.top ?? library.count, library.count)
	const order = topIndices(scores, top)
	const step = library.grid.length > 1 ? library.grid[1]! - library.grid[0]! : 0
	return ok({
		results: order.map((row, rank) => ({
			id: library.ids[row]!,
			material: library.materials[row]!,
			correlation: scores[row]!,
			rank: rank + 1,
			coverage: library.coverage[row]!,
		})),
		algorithm: SEARCH_ALGORITHM,
		algorithmVersion: ENGINE_VERSION,
		params: {
			grid: { from: library.grid[0]!, to: library.grid[library.grid.length - 1]!, step },
			points: library.rowLength,
			exclusionRegions: library.exclusionRegions,
			precision: library.precision,
			top,
		},
	})
}

/** Indices of the `k` highest scores, highest first; ties keep library order. O(n·k) for small k, else a sort. */
function topIndices(scores: Float64Array, k: number): Array<number> {
	const before = (a: number, b: number) => scores[a]! > scores[b]! || (scores[a] === scores[b] && a < b)
	if (k <= 64) {
		const best: Array<number> = []
		for (let i = 0; i < scores.length; i++) {
			if (best.length === k && !before(i, best[k - 1]!)) continue
			let at = best.length === k ? k - 1 : best.length
			if (best.length < k) best.push(i)
			while (at > 0 && before(i, best[at - 1]!)) {
				best[at] = best[at - 1]!
				at--
			}
			best[at] = i
		}
		return best
	}
	const indices = Array.from({ length: scores.length }, (_, i) => i)
	indices.sort((a, b) => scores[b]! - scores[a]! || a - b)
	return indices.slice(0, k)
}

export type Specificity = {
	targetId: string
	/** The most similar reference of another material, or null when the library holds no other material. */
	nearest: { id: string; material: string; correlation: number } | null
	threshold: number
	/** threshold − nearest correlation: positive means the nearest other material stays below the acceptance threshold. */
	margin: number | null
	specific: boolean
}

/**
 * Specificity of one reference under a correlation threshold: its nearest reference of another material and the
 * margin to the threshold (ICH Q2 specificity, FACTS.md §2.5 / §5.2: thresholds are validated against close
 * relatives). Fails with NotFound when `targetId` is not in the library.
 */
export function specificity(
	library: PreparedLibrary,
	targetId: string,
	threshold: number,
): Result<Specificity, DomainError> {
	const target = library.ids.indexOf(targetId)
	if (target < 0) return err(new NotFound(`reference ${targetId}`))
	const query = Float64Array.from(library.data.subarray(target * library.rowLength, (target + 1) * library.rowLength))
	const scores = scoreLibrary(library, query)
	const material = library.materials[target]!
	let best = -1
	for (let row = 0; row < library.count; row++) {
		if (library.materials[row] === material) continue
		if (best < 0 || scores[row]! > scores[best]!) best = row
	}
	if (best < 0) return ok({ targetId, nearest: null, threshold, margin: null, specific: true })
	const correlation = scores[best]!
	return ok({
		targetId,
		nearest: { id: library.ids[best]!, material: library.materials[best]!, correlation },
		threshold,
		margin: threshold - correlation,
		specific: correlation < threshold,
	})
}
