/**
 * Unit conversions for infrared abscissae and ordinates. Pure.
 *
 * Conventions: wavenumber ν̃ in cm⁻¹, wavelength λ in µm or nm, ν̃ = 10⁴ / λ(µm) = 10⁷ / λ(nm);
 * absorbance is decadic, A = −log10 T with T the transmittance as a fraction (0–1).
 */

/**
 * Smallest transmittance (fraction) we convert. Anything at or below it (including the zero and negative
 * values that baseline offsets produce in saturated bands) is clipped here, so absorbance never exceeds
 * {@link MAX_ABSORBANCE} and is never NaN or Infinity. Instruments rarely report meaningful absorbance above
 * about 4–5 (common practice, no source), so the cap hides nothing a comparison could use.
 */
export const MIN_TRANSMITTANCE = 1e-5

/** Absorbance that {@link MIN_TRANSMITTANCE} maps to: −log10(1e-5) = 5. */
export const MAX_ABSORBANCE = 5

/** Transmittance above this value cannot be a fraction (T ≤ 1, plus baseline overshoot); it must be percent. */
export const PERCENT_TRANSMITTANCE_THRESHOLD = 2

/** Convert a wavelength in µm to a wavenumber in cm⁻¹. Returns NaN for λ ≤ 0 (no physical wavenumber). */
export function micrometresToWavenumber(micrometres: number): number {
	return micrometres > 0 ? 1e4 / micrometres : Number.NaN
}

/** Convert a wavenumber in cm⁻¹ to a wavelength in µm. Returns NaN for ν̃ ≤ 0. */
export function wavenumberToMicrometres(wavenumber: number): number {
	return wavenumber > 0 ? 1e4 / wavenumber : Number.NaN
}

/** Convert a wavelength in nm to a wavenumber in cm⁻¹. Returns NaN for λ ≤ 0. */
export function nanometresToWavenumber(nanometres: number): number {
	return nanometres > 0 ? 1e7 / nanometres : Number.NaN
}

/**
 * Absorbance from transmittance. `scale` says whether `t` is a fraction (0–1) or percent (0–100).
 * Values at or below {@link MIN_TRANSMITTANCE} (as a fraction) are clipped, so the result is always finite
 * and at most {@link MAX_ABSORBANCE}. Non-finite input gives NaN (callers refuse such data earlier).
 */
export function transmittanceToAbsorbance(t: number, scale: 'fraction' | 'percent'): number {
	const fraction = scale === 'percent' ? t / 100 : t
	if (Number.isNaN(fraction)) return Number.NaN
	return fraction <= MIN_TRANSMITTANCE ? MAX_ABSORBANCE : -Math.log10(fraction)
}

/** Transmittance (fraction, 0–1 for A ≥ 0) from decadic absorbance: T = 10^−A. */
export function absorbanceToTransmittance(a: number): number {
	return 10 ** -a
}

export type TransmittanceConversion = {
	/** Absorbance, same length and order as the input. */
	absorbance: Float64Array
	/** How many values were at or below {@link MIN_TRANSMITTANCE} and were clipped. */
	clipped: number
	/** The lowest transmittance met, in the input's own scale (NaN for empty input). */
	lowest: number
}

/**
 * Convert a whole transmittance array to absorbance, counting the clipped values so that the importer can warn.
 * Pure; allocates one new array.
 */
export function transmittancesToAbsorbance(
	values: Float64Array,
	scale: 'fraction' | 'percent',
): TransmittanceConversion {
	const out = new Float64Array(values.length)
	const divisor = scale === 'percent' ? 100 : 1
	let clipped = 0
	let lowest = Number.NaN
	for (let i = 0; i < values.length; i++) {
		const t = values[i]!
		if (!(t >= lowest)) lowest = t
		const fraction = t / divisor
		if (fraction <= MIN_TRANSMITTANCE) {
			out[i] = MAX_ABSORBANCE
			clipped++
		} else {
			out[i] = -Math.log10(fraction)
		}
	}
	return { absorbance: out, clipped, lowest }
}
