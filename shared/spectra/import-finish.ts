import { err, ok, type Result } from '#shared/errors.ts'
import { SpectrumImportError } from '#shared/spectra/import-error.ts'
import type { ImportWarning, OrdinateKind, Spectrum } from '#shared/spectra/types.ts'
import {
	MAX_ABSORBANCE,
	MIN_TRANSMITTANCE,
	PERCENT_TRANSMITTANCE_THRESHOLD,
	micrometresToWavenumber,
	nanometresToWavenumber,
	transmittancesToAbsorbance,
} from '#shared/spectra/units.ts'

/** Abscissa unit of a source file, after reading its label or header. */
export type XUnitKind = 'wavenumber' | 'micrometres' | 'nanometres'

/**
 * Ordinate as declared by a source file. 'transmittance' leaves fraction vs percent open (decided from the
 * values); 'unknown' means nothing was declared and the kind is guessed from the shape of the data.
 */
export type DeclaredOrdinate = 'absorbance' | 'transmittance' | 'transmittance-percent' | 'unknown'

/** Upper bound on the points of one spectrum; guards memory against DUP bombs and absurd files. */
export const MAX_POINTS = 2_000_000

/**
 * Read an XUNITS label or a column header. Returns null when the unit is not an infrared abscissa we convert.
 * Accepts the JCAMP-DX spellings (1/CM, MICROMETERS, NANOMETERS) and common header spellings (cm-1, µm, um, nm).
 */
export function parseXUnits(raw: string): XUnitKind | null {
	const u = raw.toUpperCase().replace(/[\s_]/g, '')
	if (/^(1\/CM|CM-1|CM\^-1|CM⁻¹|CM\*\*-1|\/CM|WAVENUMBERS?(\(CM-1\)|\(1\/CM\))?)$/.test(u)) return 'wavenumber'
	if (/^(MICROMETERS?|MICROMETRES?|MICRONS?|UM|ΜM|µM)$/.test(u)) return 'micrometres'
	if (/^(NANOMETERS?|NANOMETRES?|NM)$/.test(u)) return 'nanometres'
	return null
}

/**
 * Read a YUNITS label or a column header. 'reflectance' and 'other' are refused by the callers, because
 * Bandproof compares absorbance spectra and these cannot be converted without a model.
 */
export function parseYUnits(raw: string): DeclaredOrdinate | 'reflectance' | 'other' {
	const u = raw.toUpperCase().replace(/[\s_-]/g, '')
	if (u === '') return 'unknown'
	if (/^(ABSORBANCE|ABS|A|ABSORBANCEUNITS|AU|ABSORBANCE\(AU\)|ABSORBANCE\(A\))$/.test(u)) return 'absorbance'
	if (/^(%T|%TRANSMITTANCE|PERCENTTRANSMITTANCE|T%|TRANSMITTANCE%|TRANSMITTANCE\(%\)|%TRANSMISSION)$/.test(u)) {
		return 'transmittance-percent'
	}
	if (/^(TRANSMITTANCE|TRANSMISSION|T)$/.test(u)) return 'transmittance'
	if (u.includes('REFLECT')) return 'reflectance'
	if (/^(ARBITRARYUNITS|ARBITRARY|ARB\.?UNITS|COUNTS|INTENSITY)$/.test(u)) return 'unknown'
	return 'other'
}

export type FinishInput = {
	/** Abscissae in the file's unit and order (already multiplied by any XFACTOR). */
	x: Float64Array
	/** Ordinates in the file's unit (already multiplied by any YFACTOR); same length as x. */
	y: Float64Array
	xUnit: XUnitKind
	ordinate: DeclaredOrdinate
	/** Whether the points may come in any order (peak tables); otherwise they must be monotonic. */
	sortable: boolean
	/** Where the data start, for messages. */
	dataLine: number
}

export type FinishOutput = { spectrum: Spectrum; ordinate: OrdinateKind; warnings: Array<ImportWarning> }

/**
 * Turn decoded file values into the engine's {@link Spectrum}: x in cm⁻¹ strictly ascending, y absorbance.
 * Refuses NaN/Infinity, non-positive wavelengths, repeated or unordered abscissae (except for peak tables, which
 * are sorted). Transmittance ≤ {@link MIN_TRANSMITTANCE} is clipped with a warning. Pure.
 */
export function finishSpectrum(input: FinishInput): Result<FinishOutput, SpectrumImportError> {
	const { xUnit, sortable, dataLine } = input
	const n = input.x.length
	const warnings: Array<ImportWarning> = []
	if (n < 2) {
		return err(
			new SpectrumImportError(
				'no-data',
				`the data hold ${n} point${n === 1 ? '' : 's'}; a spectrum needs at least 2`,
				dataLine,
			),
		)
	}
	for (let i = 0; i < n; i++) {
		if (!Number.isFinite(input.x[i]!) || !Number.isFinite(input.y[i]!)) {
			return err(
				new SpectrumImportError(
					'nan',
					`point ${i + 1} of the data is not a finite number (x ${input.x[i]}, y ${input.y[i]})`,
					dataLine,
				),
			)
		}
	}
	let x = input.x
	if (xUnit !== 'wavenumber') {
		const convert = xUnit === 'micrometres' ? micrometresToWavenumber : nanometresToWavenumber
		const converted = new Float64Array(n)
		for (let i = 0; i < n; i++) {
			const v = convert(x[i]!)
			if (!Number.isFinite(v)) {
				const unit = xUnit === 'micrometres' ? 'µm' : 'nm'
				return err(
					new SpectrumImportError(
						'units',
						`wavelength ${x[i]} ${unit} (point ${i + 1}) cannot be converted to a wavenumber`,
						dataLine,
					),
				)
			}
			converted[i] = v
		}
		x = converted
	}
	let y = input.y
	const order = orderOf(x)
	if (order.kind === 'descending') {
		x = reversed(x)
		y = reversed(y)
	} else if (order.kind === 'unordered' || order.kind === 'repeated') {
		if (!sortable || order.kind === 'repeated') {
			const what =
				order.kind === 'repeated' ? 'repeats the abscissa of the point before it' : 'breaks the order of the abscissae'
			return err(
				new SpectrumImportError('x-order', `point ${order.at + 1} (x = ${input.x[order.at]}) ${what}`, dataLine),
			)
		}
		const idx = Array.from({ length: n }, (_, i) => i).sort((a, b) => x[a]! - x[b]!)
		const sx = new Float64Array(n)
		const sy = new Float64Array(n)
		for (let i = 0; i < n; i++) {
			sx[i] = x[idx[i]!]!
			sy[i] = y[idx[i]!]!
		}
		for (let i = 1; i < n; i++) {
			if (sx[i] === sx[i - 1]) {
				return err(new SpectrumImportError('x-order', `the abscissa ${sx[i]} occurs twice`, dataLine))
			}
		}
		x = sx
		y = sy
		warnings.push({ code: 'sorted', message: 'the points were not in order and were sorted by wavenumber' })
	}
	const ordinate = resolveOrdinate(input.ordinate, y, warnings)
	let absorbance: Float64Array
	if (ordinate === 'absorbance') {
		absorbance = y === input.y ? Float64Array.from(y) : y
	} else {
		const scale = ordinate === 'transmittance-percent' ? 'percent' : 'fraction'
		const conversion = transmittancesToAbsorbance(y, scale)
		absorbance = conversion.absorbance
		if (conversion.clipped > 0) {
			const floor = scale === 'percent' ? `${MIN_TRANSMITTANCE * 100} %T` : `${MIN_TRANSMITTANCE}`
			warnings.push({
				code: 'transmittance-clipped',
				message:
					`${conversion.clipped} transmittance value${conversion.clipped === 1 ? ' was' : 's were'} at or below ${floor} ` +
					`(lowest ${conversion.lowest}${scale === 'percent' ? ' %T' : ''}) and ${conversion.clipped === 1 ? 'was' : 'were'} clipped ` +
					`to absorbance ${MAX_ABSORBANCE}; these bands are saturated`,
			})
		}
	}
	return ok({ spectrum: { x, y: absorbance }, ordinate, warnings })
}

type Order = { kind: 'ascending' | 'descending' } | { kind: 'unordered' | 'repeated'; at: number }

function orderOf(x: Float64Array): Order {
	const n = x.length
	const descending = x[n - 1]! < x[0]!
	for (let i = 1; i < n; i++) {
		const a = x[i - 1]!
		const b = x[i]!
		if (a === b) return { kind: 'repeated', at: i }
		if (descending ? b > a : b < a) return { kind: 'unordered', at: i }
	}
	return { kind: descending ? 'descending' : 'ascending' }
}

function reversed(a: Float64Array): Float64Array {
	const out = new Float64Array(a.length)
	for (let i = 0, j = a.length - 1; j >= 0; i++, j--) out[i] = a[j]!
	return out
}

/**
 * Decide how the ordinate is stored. Declared percent/absorbance is trusted. 'transmittance' is a fraction
 * unless values exceed {@link PERCENT_TRANSMITTANCE_THRESHOLD}, then percent (with a warning, since that was
 * read from the values). 'unknown' is guessed from the shape: transmittance spectra sit near their maximum with
 * bands pointing down, absorbance spectra sit near their minimum with bands pointing up (common practice, no source).
 */
function resolveOrdinate(declared: DeclaredOrdinate, y: Float64Array, warnings: Array<ImportWarning>): OrdinateKind {
	if (declared === 'absorbance') return 'absorbance'
	if (declared === 'transmittance-percent') return 'transmittance-percent'
	let max = -Infinity
	let min = Infinity
	for (let i = 0; i < y.length; i++) {
		const v = y[i]!
		if (v > max) max = v
		if (v < min) min = v
	}
	if (declared === 'transmittance') {
		if (max > PERCENT_TRANSMITTANCE_THRESHOLD) {
			warnings.push({
				code: 'ordinate-guessed',
				message: `the transmittance values reach ${round(max)}, so they were read as percent transmittance`,
			})
			return 'transmittance-percent'
		}
		return 'transmittance-fraction'
	}
	const sorted = Float64Array.from(y).sort()
	const median = sorted[sorted.length >> 1]!
	const position = max > min ? (median - min) / (max - min) : 0
	let kind: OrdinateKind
	if (position > 0.5 && min >= -0.05 * Math.max(1, max)) {
		kind = max > PERCENT_TRANSMITTANCE_THRESHOLD ? 'transmittance-percent' : 'transmittance-fraction'
	} else {
		kind = 'absorbance'
	}
	const described =
		kind === 'absorbance'
			? 'absorbance'
			: kind === 'transmittance-percent'
				? 'percent transmittance'
				: 'transmittance (0–1)'
	warnings.push({
		code: 'ordinate-guessed',
		message: `the file does not say what its y values are; they were read as ${described} from the shape of the data (values ${round(min)} to ${round(max)}, bands pointing ${kind === 'absorbance' ? 'up' : 'down'})`,
	})
	return kind
}

function round(v: number): number {
	return Math.round(v * 1000) / 1000
}
