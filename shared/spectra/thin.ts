/**
 * Display thinning: fewer points for drawing, without losing bands. Pure and deterministic.
 *
 * Method: min/max per bucket. The window is cut into equal-count buckets and each bucket keeps its lowest and its
 * highest point, in x order; the window's first and last points are always kept. A line drawn through the result
 * has the same vertical envelope as the full data at any bucket width up to one pixel, so no band maximum and no
 * trough is shaved off. Largest-triangle-three-buckets keeps one point per bucket and can drop the lower of two
 * close bands, which an analyst would read as a missing band, so it is not used.
 *
 * Because the kept points are each bucket's extremes in absorbance, they are also the extremes in transmittance
 * (T = 10^−A is monotone), so one thinning serves both ordinate modes.
 */

export type ThinOptions = {
	/** Upper bound on the number of points returned; an integer ≥ 2. */
	maxPoints: number
	/** Visible window in cm⁻¹ (either order); omit both for the whole spectrum. */
	from?: number
	to?: number
}

export type ThinnedSeries = { x: Array<number>; y: Array<number> }

/**
 * Thin a spectrum for drawing, optionally restricted to a visible window.
 *
 * `x` must be monotone (ascending, as stored, or descending); the output keeps its order, is strictly a subset of
 * the input points, and has at most `maxPoints` points. With a window, the nearest point outside each edge is
 * included so that a drawn line reaches the edges of the view. Non-finite ordinates are never chosen as a bucket's
 * extreme unless the whole bucket is non-finite (then the bucket contributes nothing).
 *
 * Guarantee (tested): a point that is the strict maximum (or minimum) of every index within
 * {@link bucketSpan}(window length, maxPoints) of it is kept.
 */
export function thinForDisplay(x: ArrayLike<number>, y: ArrayLike<number>, options: ThinOptions): ThinnedSeries {
	if (x.length !== y.length) throw new RangeError(`x has ${x.length} points but y has ${y.length}`)
	const maxPoints = Math.floor(options.maxPoints)
	if (!(maxPoints >= 2)) throw new RangeError(`maxPoints must be at least 2, got ${options.maxPoints}`)
	const [start, end] = windowIndices(x, options.from, options.to)
	const out: ThinnedSeries = { x: [], y: [] }
	if (end < start) return out
	const count = end - start + 1
	if (count <= maxPoints) {
		for (let i = start; i <= end; i++) push(out, x, y, i)
		return out
	}
	push(out, x, y, start)
	const innerStart = start + 1
	const inner = count - 2
	const buckets = bucketCount(maxPoints)
	for (let b = 0; b < buckets; b++) {
		const from = innerStart + Math.floor((b * inner) / buckets)
		const to = innerStart + Math.floor(((b + 1) * inner) / buckets)
		let lo = -1
		let hi = -1
		for (let i = from; i < to; i++) {
			const v = y[i]!
			if (!Number.isFinite(v)) continue
			if (lo < 0 || v < y[lo]!) lo = i
			if (hi < 0 || v > y[hi]!) hi = i
		}
		if (lo < 0) continue
		if (lo === hi) push(out, x, y, lo)
		else if (lo < hi) {
			push(out, x, y, lo)
			push(out, x, y, hi)
		} else {
			push(out, x, y, hi)
			push(out, x, y, lo)
		}
	}
	push(out, x, y, end)
	return out
}

/** Number of min/max buckets used for a window of `count` points thinned to `maxPoints`. */
function bucketCount(maxPoints: number): number {
	return Math.floor((maxPoints - 2) / 2)
}

/**
 * The widest bucket, in points, that {@link thinForDisplay} uses for a window of `count` points and `maxPoints`
 * (0 when nothing is thinned; Infinity when only the two ends fit). A band maximum survives when no higher point lies
 * within this many indices of it.
 */
export function bucketSpan(count: number, maxPoints: number): number {
	const limit = Math.floor(maxPoints)
	if (count <= limit) return 0
	const buckets = bucketCount(limit)
	return buckets > 0 ? Math.ceil((count - 2) / buckets) : Infinity
}

/**
 * Inclusive index range of the points inside [min(from, to), max(from, to)], widened by one point on each side
 * (clamped to the data). Returns [0, n − 1] without a window and [0, −1] for empty data.
 */
export function windowIndices(x: ArrayLike<number>, from?: number, to?: number): [number, number] {
	const n = x.length
	if (n === 0) return [0, -1]
	if (from === undefined && to === undefined) return [0, n - 1]
	const a = from ?? -Infinity
	const b = to ?? Infinity
	const lo = Math.min(a, b)
	const hi = Math.max(a, b)
	const ascending = x[n - 1]! >= x[0]!
	// In ascending data the window starts at the first x ≥ lo; in descending data at the first x ≤ hi.
	const first = ascending ? firstIndex(x, (v) => v >= lo) : firstIndex(x, (v) => v <= hi)
	const afterLast = ascending ? firstIndex(x, (v) => v > hi) : firstIndex(x, (v) => v < lo)
	return [Math.max(0, first - 1), Math.min(n - 1, afterLast)]
}

/**
 * Index of the point whose x is nearest to `value` (the lower index on a tie), or −1 for empty data.
 * `x` must be monotone, ascending or descending. O(log n).
 */
export function nearestIndex(x: ArrayLike<number>, value: number): number {
	const n = x.length
	if (n === 0) return -1
	const ascending = x[n - 1]! >= x[0]!
	const i = ascending ? firstIndex(x, (v) => v >= value) : firstIndex(x, (v) => v <= value)
	if (i <= 0) return 0
	if (i >= n) return n - 1
	return Math.abs(x[i - 1]! - value) <= Math.abs(x[i]! - value) ? i - 1 : i
}

/** First index whose value satisfies a predicate that is false then true along the array (n when none). */
function firstIndex(x: ArrayLike<number>, predicate: (value: number) => boolean): number {
	let lo = 0
	let hi = x.length
	while (lo < hi) {
		const mid = (lo + hi) >>> 1
		if (predicate(x[mid]!)) hi = mid
		else lo = mid + 1
	}
	return lo
}

function push(out: ThinnedSeries, x: ArrayLike<number>, y: ArrayLike<number>, i: number) {
	out.x.push(x[i]!)
	out.y.push(y[i]!)
}
