/**
 * Synthetic spectra for the demo scenario only: absorbance built from invented band lists (positions chosen to
 * look like the named substances, not measured data), written as JCAMP-DX so that the demo uploads go through
 * the same import path as real files. Deterministic: the same seed gives the same bytes.
 */
import { encodeSpectrumJcamp } from '#shared/spectra/encode-jcamp.ts'
import { PH_EUR_FT_TABLE } from '#shared/spectra/polystyrene.ts'

type Band = [position: number, strength: 'vs' | 's' | 'm' | 'w', width?: 'broad']

const HEIGHT = { vs: 0.95, s: 0.6, m: 0.32, w: 0.12 } as const

/** Invented band lists (cm⁻¹) for the demo materials. */
export const DEMO_BANDS: Record<string, Array<Band>> = {
	'RM-0101': [
		[3010, 'm', 'broad'],
		[2870, 'w'],
		[1752, 'vs'],
		[1690, 'vs'],
		[1605, 's'],
		[1483, 'm'],
		[1457, 's'],
		[1370, 'm'],
		[1305, 's'],
		[1220, 's'],
		[1188, 'vs'],
		[1093, 'm'],
		[1014, 'm'],
		[917, 'm'],
		[754, 's'],
		[704, 'm'],
	],
	'RM-0102': [
		[3325, 's', 'broad'],
		[3160, 'm', 'broad'],
		[1654, 'vs'],
		[1610, 's'],
		[1563, 's'],
		[1507, 'vs'],
		[1443, 'm'],
		[1370, 'm'],
		[1328, 'm'],
		[1258, 's'],
		[1226, 's'],
		[1171, 'm'],
		[968, 'w'],
		[837, 'm'],
		[808, 'm'],
		[714, 'm'],
	],
	'RM-0107': [
		[2985, 'm'],
		[2940, 'w'],
		[1742, 'vs'],
		[1447, 'm'],
		[1374, 's'],
		[1240, 'vs'],
		[1098, 'w'],
		[1047, 's'],
		[938, 'w'],
		[848, 'w'],
		[786, 'w'],
	],
	'RM-0108': [
		[3340, 'vs', 'broad'],
		[2971, 's'],
		[2933, 'm'],
		[2885, 'w'],
		[1467, 'm'],
		[1380, 'm'],
		[1341, 'm'],
		[1161, 's'],
		[1129, 's'],
		[951, 's'],
		[817, 'm'],
	],
	'RM-0109': [
		[3064, 'w'],
		[2820, 'm'],
		[2738, 'm'],
		[1703, 'vs'],
		[1597, 's'],
		[1585, 'm'],
		[1455, 'm'],
		[1312, 'm'],
		[1204, 's'],
		[1167, 'm'],
		[828, 'm'],
		[746, 's'],
		[688, 's'],
	],
	'RM-0110': [
		[3294, 's'],
		[3195, 'w'],
		[3061, 'w'],
		[1665, 'vs'],
		[1600, 's'],
		[1557, 's'],
		[1500, 'm'],
		[1434, 's'],
		[1370, 'm'],
		[1322, 's'],
		[1265, 'm'],
		[754, 's'],
		[694, 's'],
	],
}

/** A small deterministic pseudo-random generator (mulberry32), so demo files are reproducible. */
function random(seed: number): () => number {
	let state = seed >>> 0
	return () => {
		state = (state + 0x6d2b79f5) >>> 0
		let t = state
		t = Math.imul(t ^ (t >>> 15), t | 1)
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296
	}
}

/** A band added to a demo spectrum (an impurity, moisture): absorbance height and full width at half height, cm⁻¹. */
export type ExtraBand = { position: number; height: number; fwhm: number }

export type DemoSpectrumOptions = {
	seed: number
	/** cm⁻¹ added to every band position. */
	shift?: number
	/** Factor on the whole absorbance (sample amount, ATR contact). */
	scale?: number
	extraBands?: ReadonlyArray<ExtraBand>
}

/** Pseudo-Voigt band shape (60 % Lorentzian, 40 % Gaussian), 1 at the maximum. */
function profile(offset: number, fwhm: number): number {
	const d = offset / (fwhm / 2)
	return 0.6 / (1 + d * d) + 0.4 * Math.exp(-Math.LN2 * d * d)
}

/** A demo spectrum: 650–4000 cm⁻¹ every 1 cm⁻¹, pseudo-Voigt bands, a gentle baseline and a little noise. */
export function demoSpectrum(code: string, options: DemoSpectrumOptions): { x: Float64Array; y: Float64Array } {
	const bands = DEMO_BANDS[code]
	if (!bands) throw new Error(`no demo bands for ${code}`)
	const next = random(options.seed)
	const points = 3351
	const x = new Float64Array(points)
	const y = new Float64Array(points)
	for (let i = 0; i < points; i++) {
		const nu = 650 + i
		x[i] = nu
		let value = 0.03 + 0.00001 * (nu - 650)
		for (const [position, strength, width] of bands) {
			value += HEIGHT[strength] * profile(nu - position - (options.shift ?? 0), width === 'broad' ? 220 : 12)
		}
		for (const extra of options.extraBands ?? []) value += extra.height * profile(nu - extra.position, extra.fwhm)
		y[i] = value * (options.scale ?? 1) + (next() - 0.5) * 0.004
	}
	return { x, y }
}

/** The demo spectrum as JCAMP-DX bytes, as an instrument export might carry it. */
export function demoJcamp(code: string, title: string, options: DemoSpectrumOptions): Uint8Array {
	return asJcamp(demoSpectrum(code, options), title)
}

function asJcamp(spectrum: { x: Float64Array; y: Float64Array }, title: string): Uint8Array {
	const text = encodeSpectrumJcamp(spectrum, {
		title,
		form: 'DIFDUP',
		labels: { ORIGIN: 'Calder Vale Pharmaceuticals QC (demo data, synthetic)', OWNER: 'Demo data', RESOLUTION: '4' },
	})
	return new TextEncoder().encode(text)
}

/**
 * Bands of the demo polystyrene film (cm⁻¹, absorbance at the maximum, full width at half height). The seven
 * checked positions are exactly the nominal values of Ph. Eur. 2.2.24 Table 2.2.24.-1 (PH_EUR_FT_TABLE, so a
 * film without a scale error passes by construction); the other bands and every height and width are placed from
 * memory of what a polystyrene film looks like, for the demo only: not a measurement, not a reference.
 */
const POLYSTYRENE_FILM_BANDS: ReadonlyArray<[position: number, height: number, fwhm: number]> = [
	...PH_EUR_FT_TABLE.bands.map((band): [number, number, number] => [
		band.nominal,
		{ 3060: 0.75, 2849.5: 0.7, 1942.9: 0.12, 1601.2: 0.55, 1583: 0.25, 1154.5: 0.1, 1028.3: 0.35 }[band.nominal] ?? 0.3,
		band.nominal > 2800 ? 9 : 7,
	]),
	[3082, 0.45, 8],
	[3026, 1.1, 10],
	[3001, 0.35, 8],
	[2923, 1.3, 16],
	[1871, 0.1, 9],
	[1802, 0.09, 9],
	[1745, 0.05, 10],
	[1493, 1.2, 9],
	[1452, 1.15, 10],
	[1370, 0.06, 10],
	[1181, 0.08, 8],
	[1069, 0.2, 8],
	[906, 0.25, 8],
	[841, 0.06, 10],
	[756, 1.3, 10],
	[698, 1.4, 12],
]

/**
 * A demo polystyrene film spectrum (absorbance, 650–4000 cm⁻¹ every 0.5 cm⁻¹). `scaleError` models a wavenumber
 * scale that reads high by that fraction (a miscalibrated reference laser shifts every band in proportion to its
 * wavenumber): 7e-4 puts the 3060.0 band 2.1 cm⁻¹ high and the 1028.3 band 0.7 cm⁻¹ high.
 */
export function demoPolystyreneSpectrum(options: { seed: number; scaleError?: number }): {
	x: Float64Array
	y: Float64Array
} {
	const next = random(options.seed)
	const stretch = 1 + (options.scaleError ?? 0)
	const points = 6701
	const x = new Float64Array(points)
	const y = new Float64Array(points)
	for (let i = 0; i < points; i++) {
		const nu = 650 + i * 0.5
		x[i] = nu
		let value = 0.02 + 0.00002 * (nu - 650)
		for (const [position, height, fwhm] of POLYSTYRENE_FILM_BANDS)
			value += height * profile(nu - position * stretch, fwhm)
		y[i] = value + (next() - 0.5) * 0.002
	}
	return { x, y }
}

/** The demo film spectrum as JCAMP-DX bytes. */
export function demoPolystyreneJcamp(title: string, options: { seed: number; scaleError?: number }): Uint8Array {
	return asJcamp(demoPolystyreneSpectrum(options), title)
}
