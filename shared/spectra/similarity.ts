/**
 * Similarity measures between two spectra already sampled on the same grid (see preprocess.ts).
 * All functions take plain ordinate arrays plus an optional inclusion mask (1 = use the point) and are pure.
 * Definitions: FACTS.md §5.1 (Pearson, cosine, unit-norm Euclidean distance, first-derivative variants).
 */
import { DomainError } from '#shared/errors.ts'

/** The two arrays (or the array and the mask) differ in length: a caller bug, thrown rather than returned. */
export class GridMismatch extends DomainError {
	constructor(message = 'the spectra are not on the same grid') {
		super(message, 422)
	}
}

function checkLengths(a: ArrayLike<number>, b: ArrayLike<number>, mask?: Uint8Array): void {
	if (a.length !== b.length) throw new GridMismatch(`lengths differ: ${a.length} vs ${b.length}`)
	if (mask && mask.length !== a.length) throw new GridMismatch(`mask length ${mask.length} differs from ${a.length}`)
}

/**
 * Pearson correlation r = Σ(aᵢ−ā)(bᵢ−b̄) / √(Σ(aᵢ−ā)² Σ(bᵢ−b̄)²) over the points where `mask` is 1
 * (all points without a mask). Result in [−1, 1] (clamped against rounding); null when fewer than two points
 * are included or either side is flat (r undefined). Two-pass (mean first) for numerical stability.
 * Invariant to positive scaling and to offsets of either input; symmetric in a and b.
 */
export function pearson(a: ArrayLike<number>, b: ArrayLike<number>, mask?: Uint8Array): number | null {
	checkLengths(a, b, mask)
	let count = 0
	let sumA = 0
	let sumB = 0
	for (let i = 0; i < a.length; i++) {
		if (mask && !mask[i]) continue
		count++
		sumA += a[i]!
		sumB += b[i]!
	}
	if (count < 2) return null
	const meanA = sumA / count
	const meanB = sumB / count
	let cross = 0
	let varA = 0
	let varB = 0
	for (let i = 0; i < a.length; i++) {
		if (mask && !mask[i]) continue
		const da = a[i]! - meanA
		const db = b[i]! - meanB
		cross += da * db
		varA += da * da
		varB += db * db
	}
	// NOTE: √varA·√varB rather than √(varA·varB): the product of two tiny variances underflows to 0.
	const denominator = Math.sqrt(varA) * Math.sqrt(varB)
	if (!(denominator > 0)) return null
	const r = cross / denominator
	return Number.isFinite(r) ? Math.max(-1, Math.min(1, r)) : null
}

/**
 * Cosine similarity c = a·b / (‖a‖‖b‖) (not mean-centred) over the included points; null when either norm
 * is zero. Invariant to positive scaling only.
 */
export function cosineSimilarity(a: ArrayLike<number>, b: ArrayLike<number>, mask?: Uint8Array): number | null {
	checkLengths(a, b, mask)
	let dot = 0
	let normA = 0
	let normB = 0
	for (let i = 0; i < a.length; i++) {
		if (mask && !mask[i]) continue
		dot += a[i]! * b[i]!
		normA += a[i]! * a[i]!
		normB += b[i]! * b[i]!
	}
	if (normA === 0 || normB === 0) return null
	return Math.max(-1, Math.min(1, dot / Math.sqrt(normA * normB)))
}

/**
 * Euclidean distance of the unit-normalised spectra d = ‖a/‖a‖ − b/‖b‖‖ over the included points.
 * 0 for identical shapes; d² = 2 − 2c (c the cosine); at most 2, and at most √2 for non-negative inputs.
 * Null when either norm is zero.
 */
export function euclideanDistance(a: ArrayLike<number>, b: ArrayLike<number>, mask?: Uint8Array): number | null {
	checkLengths(a, b, mask)
	let normA = 0
	let normB = 0
	for (let i = 0; i < a.length; i++) {
		if (mask && !mask[i]) continue
		normA += a[i]! * a[i]!
		normB += b[i]! * b[i]!
	}
	if (normA === 0 || normB === 0) return null
	const sa = 1 / Math.sqrt(normA)
	const sb = 1 / Math.sqrt(normB)
	let sum = 0
	for (let i = 0; i < a.length; i++) {
		if (mask && !mask[i]) continue
		const d = a[i]! * sa - b[i]! * sb
		sum += d * d
	}
	return Math.sqrt(sum)
}

/**
 * Simple first difference Δyᵢ = yᵢ₊₁ − yᵢ (length n − 1). The matching mask keeps a difference only when
 * both of its points are included, so no difference straddles an exclusion region.
 */
export function firstDifference(y: ArrayLike<number>, mask?: Uint8Array): { values: Float64Array; mask?: Uint8Array } {
	const n = Math.max(0, y.length - 1)
	const values = new Float64Array(n)
	for (let i = 0; i < n; i++) values[i] = y[i + 1]! - y[i]!
	if (!mask) return { values }
	const out = new Uint8Array(n)
	for (let i = 0; i < n; i++) out[i] = mask[i]! && mask[i + 1]! ? 1 : 0
	return { values, mask: out }
}

/**
 * First-derivative correlation by the FACTS.md §5.1 definition: Pearson of the simple first differences.
 * (compare.ts uses a Savitzky–Golay derivative instead, which suppresses noise; both suppress baseline
 * offsets and slopes.) Null under the same conditions as `pearson`.
 */
export function firstDifferenceCorrelation(
	a: ArrayLike<number>,
	b: ArrayLike<number>,
	mask?: Uint8Array,
): number | null {
	checkLengths(a, b, mask)
	const da = firstDifference(a, mask)
	const db = firstDifference(b)
	return pearson(da.values, db.values, da.mask)
}
