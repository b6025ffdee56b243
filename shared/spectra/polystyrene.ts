/**
 * Instrument check with a polystyrene film: wavenumber-scale accuracy at the pharmacopoeial bands, and the
 * resolution criteria. Pure; the spectrum is absorbance on an ascending wavenumber axis (cm⁻¹).
 *
 * Where the numbers come from (FACTS.md §1), and how sure we are of them:
 * - Band positions and tolerances: Ph. Eur. 2.2.24 Table 2.2.24.-1 as printed in Ph. Eur. 5.0 (2005), read in a
 *   secondary copy — READ-2°. The JP table (§1.2) is also READ-2° (a forum quote). Neither was checked against
 *   the current licensed edition; re-check before release (FACTS.md §1.1 edition caveat).
 * - Resolution, monochromator instruments (%T differences > 18 and > 10): READ-2°, same source.
 * - Resolution, Fourier-transform instruments (ΔA > 0.33 and > 0.08): MEMORY only — not found in any source read.
 *   These are therefore reported but, by default, NOT counted in the overall pass. Hoult et al. (FACTS.md §1.5,
 *   READ) add that the 2870/2849.5 test mostly measures film thickness on FT instruments.
 * - Resolution, JP (≥ 18 %T and ≥ 12 %T): READ-2°.
 */
import { ENGINE_VERSION, isEquallySpaced, medianSpacing, secondDerivative } from '#shared/spectra/preprocess.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

export const POLYSTYRENE_ALGORITHM = 'polystyrene-wavenumber-and-resolution-check'

export type EvidenceLabel = 'READ' | 'READ-2°' | 'MEMORY' | 'DERIVED'

export type PolystyreneBand = { nominal: number; tolerance: number }

export type PolystyreneTable = {
	id: 'ph-eur-ft' | 'ph-eur-monochromator' | 'jp'
	title: string
	source: string
	evidence: EvidenceLabel
	bands: ReadonlyArray<PolystyreneBand>
}

/** Ph. Eur. 5.0 Table 2.2.24.-1, Fourier-transform instruments: ±1.0 cm⁻¹ at every band. FACTS.md §1.1 [READ-2°]. */
export const PH_EUR_FT_TABLE: PolystyreneTable = {
	id: 'ph-eur-ft',
	title: 'Ph. Eur. 2.2.24 (5.0) polystyrene bands, FT instruments',
	source: 'FACTS.md §1.1, Ph. Eur. 5.0 Table 2.2.24.-1 (secondary copy)',
	evidence: 'READ-2°',
	bands: [
		{ nominal: 3060.0, tolerance: 1.0 },
		{ nominal: 2849.5, tolerance: 1.0 },
		{ nominal: 1942.9, tolerance: 1.0 },
		{ nominal: 1601.2, tolerance: 1.0 },
		{ nominal: 1583.0, tolerance: 1.0 },
		{ nominal: 1154.5, tolerance: 1.0 },
		{ nominal: 1028.3, tolerance: 1.0 },
	],
}

/** Ph. Eur. 5.0 Table 2.2.24.-1, monochromator instruments. FACTS.md §1.1 [READ-2°]. */
export const PH_EUR_MONOCHROMATOR_TABLE: PolystyreneTable = {
	id: 'ph-eur-monochromator',
	title: 'Ph. Eur. 2.2.24 (5.0) polystyrene bands, monochromator instruments',
	source: 'FACTS.md §1.1, Ph. Eur. 5.0 Table 2.2.24.-1 (secondary copy)',
	evidence: 'READ-2°',
	bands: [
		{ nominal: 3060.0, tolerance: 1.5 },
		{ nominal: 2849.5, tolerance: 2.0 },
		{ nominal: 1942.9, tolerance: 1.5 },
		{ nominal: 1601.2, tolerance: 1.0 },
		{ nominal: 1583.0, tolerance: 1.0 },
		{ nominal: 1154.5, tolerance: 1.0 },
		{ nominal: 1028.3, tolerance: 1.0 },
	],
}

/** JP "Infrared Spectrophotometry" (quoted as JP 14 Suppl. 1). FACTS.md §1.2 [READ-2°, forum quote]. */
export const JP_TABLE: PolystyreneTable = {
	id: 'jp',
	title: 'JP polystyrene calibration bands',
	source: 'FACTS.md §1.2, JP 14 Suppl. 1 as quoted on a forum',
	evidence: 'READ-2°',
	bands: [
		{ nominal: 3060.0, tolerance: 1.5 },
		{ nominal: 2849.5, tolerance: 1.5 },
		{ nominal: 1942.9, tolerance: 1.5 },
		{ nominal: 1601.2, tolerance: 1.0 },
		{ nominal: 1583.0, tolerance: 1.0 },
		{ nominal: 1154.5, tolerance: 1.0 },
		{ nominal: 1028.3, tolerance: 1.0 },
	],
}

export const POLYSTYRENE_TABLES = {
	'ph-eur-ft': PH_EUR_FT_TABLE,
	'ph-eur-monochromator': PH_EUR_MONOCHROMATOR_TABLE,
	jp: JP_TABLE,
} as const satisfies Record<PolystyreneTable['id'], PolystyreneTable>

export type ResolutionCriterion = {
	id: string
	description: string
	/** Band maximum (absorbance maximum = transmission minimum), cm⁻¹. */
	maximum: number
	/** Neighbouring absorbance minimum (transmission maximum), cm⁻¹. */
	minimum: number
	/** 'absorbance': A(maximum) − A(minimum); 'percent-transmittance': %T(minimum) − %T(maximum). */
	measure: 'absorbance' | 'percent-transmittance'
	limit: number
	/** true: the value must be strictly greater than the limit (Ph. Eur. "> 18"); false: at least (JP "≥ 18"). */
	strict: boolean
	source: string
	evidence: EvidenceLabel
}

/** FT instruments: ΔA > 0.33 (2870/2849.5) and ΔA > 0.08 (1589/1583). FACTS.md §1.1 [MEMORY — unverified]. */
export const PH_EUR_FT_RESOLUTION: ReadonlyArray<ResolutionCriterion> = [
	{
		id: 'ft-2849.5-2870',
		description: 'absorbance difference between the maximum at 2849.5 and the minimum at 2870 cm⁻¹',
		maximum: 2849.5,
		minimum: 2870,
		measure: 'absorbance',
		limit: 0.33,
		strict: true,
		source: 'FACTS.md §1.1, Ph. Eur. FT resolution criterion',
		evidence: 'MEMORY',
	},
	{
		id: 'ft-1583-1589',
		description: 'absorbance difference between the maximum at 1583 and the minimum at 1589 cm⁻¹',
		maximum: 1583,
		minimum: 1589,
		measure: 'absorbance',
		limit: 0.08,
		strict: true,
		source: 'FACTS.md §1.1, Ph. Eur. FT resolution criterion',
		evidence: 'MEMORY',
	},
]

/** Monochromator instruments: x > 18 %T (2870/2849.5), y > 10 %T (1589/1583). FACTS.md §1.1 [READ-2°]. */
export const PH_EUR_MONOCHROMATOR_RESOLUTION: ReadonlyArray<ResolutionCriterion> = [
	{
		id: 'mono-2870-2849.5',
		description: '%T at the transmission maximum at 2870 minus %T at the minimum at 2849.5 cm⁻¹',
		maximum: 2849.5,
		minimum: 2870,
		measure: 'percent-transmittance',
		limit: 18,
		strict: true,
		source: 'FACTS.md §1.1, Ph. Eur. 5.0 monochromator resolution',
		evidence: 'READ-2°',
	},
	{
		id: 'mono-1589-1583',
		description: '%T at the transmission maximum at 1589 minus %T at the minimum at 1583 cm⁻¹',
		maximum: 1583,
		minimum: 1589,
		measure: 'percent-transmittance',
		limit: 10,
		strict: true,
		source: 'FACTS.md §1.1, Ph. Eur. 5.0 monochromator resolution',
		evidence: 'READ-2°',
	},
]

/** JP resolving power: ≥ 18 %T (2850/2870) and ≥ 12 %T (1583/1589), film about 0.04 mm. FACTS.md §1.2 [READ-2°]. */
export const JP_RESOLUTION: ReadonlyArray<ResolutionCriterion> = [
	{ ...PH_EUR_MONOCHROMATOR_RESOLUTION[0]!, id: 'jp-2870-2850', limit: 18, strict: false, source: 'FACTS.md §1.2, JP' },
	{ ...PH_EUR_MONOCHROMATOR_RESOLUTION[1]!, id: 'jp-1589-1583', limit: 12, strict: false, source: 'FACTS.md §1.2, JP' },
]

const RESOLUTION_BY_TABLE = {
	'ph-eur-ft': PH_EUR_FT_RESOLUTION,
	'ph-eur-monochromator': PH_EUR_MONOCHROMATOR_RESOLUTION,
	jp: JP_RESOLUTION,
} as const

/**
 * Half-width of the window searched around each nominal band, cm⁻¹. Wide enough to report a failing deviation,
 * narrow enough that the 1583.0 and 1601.2 windows stay apart (18.2 cm⁻¹). Common practice, no source.
 */
export const BAND_SEARCH_HALF_WIDTH = 6

/** Half-width of the window in which a resolution criterion's minimum or maximum is looked for, cm⁻¹. */
export const RESOLUTION_SEARCH_HALF_WIDTH = 3

export type BandLocationMethod = 'maximum' | 'second-derivative' | 'not-resolved'

export type PolystyreneBandResult = {
	nominal: number
	/** Located band position in cm⁻¹, or null when no separate band could be found in the search window. */
	observed: number | null
	/** observed − nominal, cm⁻¹ (negative = below nominal), or null. */
	deviation: number | null
	tolerance: number
	pass: boolean
	/** 'maximum': parabolic vertex of the absorbance maximum; 'second-derivative': a shoulder located by the
	 * minimum of the Savitzky–Golay second derivative; 'not-resolved': neither gave a maximum inside the window. */
	method: BandLocationMethod
}

export type ResolutionResult = {
	id: string
	description: string
	value: number | null
	limit: number
	comparison: '>' | '≥'
	unit: 'absorbance' | '%T'
	pass: boolean
	evidence: EvidenceLabel
	source: string
	/** Whether this criterion counts in the overall `pass`. */
	counted: boolean
}

export type PolystyreneOptions = {
	/** Band table (default 'ph-eur-ft'). */
	table?: PolystyreneTable['id']
	/** Restrict the check to these nominal bands (a lab's validated subset, e.g. without 1154.5 at 4 cm⁻¹). */
	bands?: ReadonlyArray<number>
	/**
	 * Count the resolution criteria in the overall pass. Default: true only for criteria that are at least READ-2°
	 * (so the MEMORY-only FT criteria are reported but not counted).
	 */
	countResolution?: 'verified-only' | 'all' | 'none'
}

export type PolystyreneCheck = {
	pass: boolean
	wavenumberPass: boolean
	resolutionPass: boolean
	bands: Array<PolystyreneBandResult>
	resolution: Array<ResolutionResult>
	reasons: Array<string>
	table: { id: PolystyreneTable['id']; title: string; source: string; evidence: EvidenceLabel }
	algorithm: typeof POLYSTYRENE_ALGORITHM
	algorithmVersion: string
	params: { searchHalfWidth: number; resolutionSearchHalfWidth: number; countResolution: string; bands: Array<number> }
}

/**
 * Check a polystyrene film spectrum against a pharmacopoeial band table and resolution criteria.
 * Each band is located as the absorbance maximum within ±BAND_SEARCH_HALF_WIDTH of its nominal position
 * (parabolic vertex through the top three points); when the maximum sits at the window edge (a shoulder), the
 * second-derivative minimum is used instead. Deviations are in cm⁻¹. Pure.
 */
export function checkPolystyrene(spectrum: Spectrum, options: PolystyreneOptions = {}): PolystyreneCheck {
	const table = POLYSTYRENE_TABLES[options.table ?? 'ph-eur-ft']
	const selected = options.bands ? table.bands.filter((b) => options.bands!.includes(b.nominal)) : table.bands
	const countResolution = options.countResolution ?? 'verified-only'
	let derivative: Float64Array | null = null
	const bands = selected.map((band): PolystyreneBandResult => {
		let located = locateMaximum(spectrum.x, spectrum.y, band.nominal, BAND_SEARCH_HALF_WIDTH)
		let method: BandLocationMethod = 'maximum'
		if (located === null && isEquallySpaced(spectrum.x)) {
			derivative ??= secondDerivative(spectrum, { windowSize: secondDerivativeWindow(spectrum), polynomial: 3 })
			const negated = derivative.map((v) => -v)
			located = locateMaximum(spectrum.x, negated, band.nominal, BAND_SEARCH_HALF_WIDTH)
			method = 'second-derivative'
		}
		if (located === null) {
			return {
				nominal: band.nominal,
				observed: null,
				deviation: null,
				tolerance: band.tolerance,
				pass: false,
				method: 'not-resolved',
			}
		}
		const deviation = located - band.nominal
		// NOTE: compare with a tiny slack so that a deviation printed as 1.0 is not failed by rounding noise.
		const pass = Math.abs(deviation) <= band.tolerance + 1e-9
		return { nominal: band.nominal, observed: located, deviation, tolerance: band.tolerance, pass, method }
	})

	const resolution = RESOLUTION_BY_TABLE[table.id].map((criterion): ResolutionResult => {
		const value = resolutionValue(spectrum, criterion)
		const pass = value !== null && (criterion.strict ? value > criterion.limit : value >= criterion.limit)
		const counted =
			countResolution === 'all' || (countResolution === 'verified-only' && criterion.evidence !== 'MEMORY')
		return {
			id: criterion.id,
			description: criterion.description,
			value,
			limit: criterion.limit,
			comparison: criterion.strict ? '>' : '≥',
			unit: criterion.measure === 'absorbance' ? 'absorbance' : '%T',
			pass,
			evidence: criterion.evidence,
			source: criterion.source,
			counted,
		}
	})

	const reasons: Array<string> = []
	for (const band of bands) {
		if (band.method === 'not-resolved') {
			reasons.push(
				`the ${band.nominal} cm⁻¹ band is not resolved as a separate band within ±${BAND_SEARCH_HALF_WIDTH} cm⁻¹`,
			)
		} else if (!band.pass) {
			reasons.push(
				`the ${band.nominal} cm⁻¹ band is at ${band.observed!.toFixed(2)} cm⁻¹, ${band.deviation!.toFixed(2)} cm⁻¹ from nominal (tolerance ±${band.tolerance})`,
			)
		}
	}
	for (const r of resolution) {
		if (r.counted && !r.pass) {
			reasons.push(
				`resolution: ${r.description} is ${r.value === null ? 'not measurable' : r.value.toFixed(3)} (limit ${r.comparison} ${r.limit})`,
			)
		}
	}
	const wavenumberPass = bands.length > 0 && bands.every((b) => b.pass)
	const resolutionPass = resolution.filter((r) => r.counted).every((r) => r.pass)
	return {
		pass: wavenumberPass && resolutionPass,
		wavenumberPass,
		resolutionPass,
		bands,
		resolution,
		reasons,
		table: { id: table.id, title: table.title, source: table.source, evidence: table.evidence },
		algorithm: POLYSTYRENE_ALGORITHM,
		algorithmVersion: ENGINE_VERSION,
		params: {
			searchHalfWidth: BAND_SEARCH_HALF_WIDTH,
			resolutionSearchHalfWidth: RESOLUTION_SEARCH_HALF_WIDTH,
			countResolution,
			bands: selected.map((b) => b.nominal),
		},
	}
}

function secondDerivativeWindow(spectrum: Spectrum): number {
	// About 6 cm⁻¹, at least 5 points: enough to locate a shoulder without merging it into its neighbour.
	let points = Math.round(6 / medianSpacing(spectrum.x))
	if (points % 2 === 0) points += 1
	return Math.max(5, points)
}

/**
 * Position of the highest point of `y` within ±halfWidth of `centre`, refined by a parabola through it and its
 * neighbours; null when that point is at the window edge (no maximum inside: a shoulder or a slope).
 */
function locateMaximum(x: Float64Array, y: ArrayLike<number>, centre: number, halfWidth: number): number | null {
	let best = -1
	let first = -1
	let last = -1
	for (let i = 0; i < x.length; i++) {
		if (Math.abs(x[i]! - centre) > halfWidth) continue
		if (first < 0) first = i
		last = i
		if (best < 0 || y[i]! > y[best]!) best = i
	}
	if (best <= 0 || best === first || best === last || best >= x.length - 1) return null
	const ym = y[best - 1]!
	const y0 = y[best]!
	const yp = y[best + 1]!
	const denominator = ym - 2 * y0 + yp
	if (!(denominator < 0)) return x[best]!
	const offset = (0.5 * (ym - yp)) / denominator
	const step = offset >= 0 ? x[best + 1]! - x[best]! : x[best]! - x[best - 1]!
	return x[best]! + offset * step
}

function resolutionValue(spectrum: Spectrum, criterion: ResolutionCriterion): number | null {
	let maxA = -Infinity
	let minA = Infinity
	for (let i = 0; i < spectrum.x.length; i++) {
		const v = spectrum.x[i]!
		if (Math.abs(v - criterion.maximum) <= RESOLUTION_SEARCH_HALF_WIDTH) maxA = Math.max(maxA, spectrum.y[i]!)
		if (Math.abs(v - criterion.minimum) <= RESOLUTION_SEARCH_HALF_WIDTH) minA = Math.min(minA, spectrum.y[i]!)
	}
	if (!Number.isFinite(maxA) || !Number.isFinite(minA)) return null
	if (criterion.measure === 'absorbance') return maxA - minA
	return 100 * 10 ** -minA - 100 * 10 ** -maxA
}
