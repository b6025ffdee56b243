/**
 * Synthetic absorbance spectra for unit tests: sums of pseudo-Voigt bands on an equally spaced grid, with an
 * optional deterministic noise (mulberry32) and baseline. Band positions passed in by tests name their sources.
 */
import type { Spectrum } from '#shared/spectra/types.ts'

export type SyntheticBand = {
	/** cm⁻¹ */
	position: number
	/** peak absorbance */
	height: number
	/** full width at half maximum, cm⁻¹ */
	fwhm: number
	/** Lorentzian fraction of the pseudo-Voigt profile, 0 (Gaussian) … 1 (Lorentzian); default 0.5 */
	eta?: number
}

export type SyntheticOptions = {
	from?: number
	to?: number
	step?: number
	/** standard deviation of Gaussian noise in absorbance */
	noise?: number
	seed?: number
	/** baseline a + b·(x − from) + c·(x − from)² */
	baseline?: { a?: number; b?: number; c?: number }
}

/** Deterministic uniform PRNG in [0, 1). */
export function mulberry32(seed: number): () => number {
	let state = seed >>> 0
	return () => {
		state = (state + 0x6d2b79f5) >>> 0
		let t = state
		t = Math.imul(t ^ (t >>> 15), t | 1)
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296
	}
}

/** Standard normal deviates from a uniform source (Box–Muller). */
export function gaussianSource(seed: number): () => number {
	const uniform = mulberry32(seed)
	return () => {
		const u = Math.max(uniform(), 1e-12)
		const v = uniform()
		return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v)
	}
}

export function bandValue(band: SyntheticBand, x: number): number {
	const eta = band.eta ?? 0.5
	const d = (x - band.position) / (band.fwhm / 2)
	const lorentz = 1 / (1 + d * d)
	const gauss = Math.exp(-Math.LN2 * d * d)
	return band.height * (eta * lorentz + (1 - eta) * gauss)
}

export function synthesise(bands: ReadonlyArray<SyntheticBand>, options: SyntheticOptions = {}): Spectrum {
	const from = options.from ?? 400
	const to = options.to ?? 4000
	const step = options.step ?? 1
	const count = Math.floor((to - from) / step + 1e-9) + 1
	const x = new Float64Array(count)
	const y = new Float64Array(count)
	const noise = options.noise ? gaussianSource(options.seed ?? 1) : null
	const { a = 0, b = 0, c = 0 } = options.baseline ?? {}
	for (let i = 0; i < count; i++) {
		const xi = from + i * step
		x[i] = xi
		let v = a + b * (xi - from) + c * (xi - from) ** 2
		for (const band of bands) v += bandValue(band, xi)
		if (noise) v += noise() * options.noise!
		y[i] = v
	}
	return { x, y }
}
