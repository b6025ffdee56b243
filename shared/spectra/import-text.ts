/**
 * Plain XY text reader: CSV, TSV, semicolon-separated and whitespace-separated two-column files, with an optional
 * header, decimal commas, scientific notation and either order of the abscissa. Pure.
 */
import { err, ok, type Result } from '#shared/errors.ts'
import { SpectrumImportError } from '#shared/spectra/import-error.ts'
import { MAX_POINTS, finishSpectrum, type DeclaredOrdinate, type XUnitKind } from '#shared/spectra/import-finish.ts'
import type { ImportWarning, ImportedSpectrum } from '#shared/spectra/types.ts'

type Delimiter = 'tab' | 'semicolon' | 'comma' | 'whitespace'

/** Lines before the first data line that we accept as a header or comments before giving up. */
const MAX_HEADER_LINES = 100

/**
 * Mid-infrared window used to refuse text that is clearly something else (cm⁻¹). Files need only overlap it:
 * extended-range instruments reach 7500 cm⁻¹ and far-IR detectors 200 cm⁻¹ (common practice, no source).
 */
const MID_IR = { low: 400, high: 4000 } as const

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/
const NOT_FINITE = /^[+-]?(nan|inf|infinity|1\.#inf|1\.#ind|#n\/a|n\/a)$/i

export type TextImportOptions = { maxPoints?: number }

/**
 * Read a two-column XY text. Result: absorbance on a strictly ascending cm⁻¹ axis. The abscissa unit is taken
 * from the header (cm-1, µm, nm) or, without one, from the range (values below 100 are read as µm, with a
 * warning); the ordinate kind from the header (absorbance, %T, transmittance) or guessed from the data with a
 * warning. Refuses NaN/Infinity, text cells in the data, unordered abscissae and ranges that miss the mid-IR.
 */
export function importText(
	text: string,
	options: TextImportOptions = {},
): Result<ImportedSpectrum, SpectrumImportError> {
	const maxPoints = options.maxPoints ?? MAX_POINTS
	const src = text.includes('\r') ? text.replace(/\r\n?/g, '\n') : text
	const warnings: Array<ImportWarning> = []
	const lines = src.split('\n')
	const xs: Array<number> = []
	const ys: Array<number> = []
	let header: string | null = null
	let headerLine = 0
	let delimiter: Delimiter | null = null
	let decimalComma = false
	let firstDataLine = 0
	let extraColumnsLine = 0
	for (let i = 0; i < lines.length; i++) {
		const line = i + 1
		const trimmed = lines[i]!.trim()
		if (trimmed === '') continue
		if (delimiter === null) {
			const detected = detectDelimiter(trimmed)
			if (detected === null) {
				if (line > MAX_HEADER_LINES) break
				header = trimmed
				headerLine = line
				continue
			}
			delimiter = detected.delimiter
			decimalComma = detected.decimalComma
			firstDataLine = line
		}
		const fields = splitFields(trimmed, delimiter)
		if (fields.length < 2) {
			return err(
				new SpectrumImportError(
					'bad-number',
					`"${clip(trimmed)}" does not hold two ${delimiterName(delimiter)}-separated numbers`,
					line,
				),
			)
		}
		const values: Array<number> = []
		for (let f = 0; f < fields.length; f++) {
			const raw = fields[f]!.trim()
			if (f >= 2 && raw === '') continue
			if (f >= 2) {
				if (extraColumnsLine === 0) extraColumnsLine = line
				continue
			}
			const cell = decimalComma ? raw.replace(',', '.') : raw
			if (NOT_FINITE.test(cell)) {
				return err(new SpectrumImportError('nan', `"${raw}" is not a finite number`, line))
			}
			if (!NUMBER.test(cell)) {
				return err(new SpectrumImportError('bad-number', `"${clip(raw)}" is not a number`, line))
			}
			values.push(Number(cell))
		}
		xs.push(values[0]!)
		ys.push(values[1]!)
		if (xs.length > maxPoints) {
			return err(new SpectrumImportError('too-large', `the file holds more than ${maxPoints} points`, line))
		}
	}
	if (delimiter === null) {
		return err(
			new SpectrumImportError(
				'no-data',
				'no lines with two numbers (x and y) were found; this is not an XY spectrum file',
			),
		)
	}
	if (extraColumnsLine !== 0) {
		warnings.push({
			code: 'extra-columns',
			message: 'the file has more than two columns; only the first two were read',
			line: extraColumnsLine,
		})
	}
	const names = header === null ? null : splitHeader(header, delimiter)
	const xName = names?.[0] ?? null
	const yName = names?.[1] ?? null
	const x = Float64Array.from(xs)
	const y = Float64Array.from(ys)

	let xUnit = xName === null ? null : headerXUnit(xName)
	if (xUnit === null) {
		const guess = guessXUnit(x)
		if (guess === null) {
			return err(
				new SpectrumImportError(
					'units',
					`the abscissae (${range(x)}) are neither wavenumbers (cm⁻¹) nor wavelengths (µm); add a header such as "wavenumber (cm-1),absorbance"`,
					firstDataLine,
				),
			)
		}
		xUnit = guess
		if (guess === 'micrometres') {
			warnings.push({
				code: 'x-unit-guessed',
				message: `the file does not name its x unit; values ${range(x)} were read as wavelengths in µm`,
			})
		}
	}
	let ordinate: DeclaredOrdinate = 'unknown'
	if (yName !== null) {
		const fromHeader = headerOrdinate(yName)
		if (fromHeader === 'reflectance') {
			return err(
				new SpectrumImportError(
					'units',
					`the y column "${yName}" is reflectance; reflectance spectra are not converted to absorbance, export absorbance or transmittance`,
					headerLine,
				),
			)
		}
		ordinate = fromHeader
	}
	const finished = finishSpectrum({ x, y, xUnit, ordinate, sortable: false, dataLine: firstDataLine })
	if (!finished.ok) return finished
	const { spectrum } = finished.value
	const low = spectrum.x[0]!
	const high = spectrum.x[spectrum.x.length - 1]!
	if (high < MID_IR.low || low > MID_IR.high) {
		return err(
			new SpectrumImportError(
				'not-infrared',
				`the wavenumbers run from ${round(low)} to ${round(high)} cm⁻¹ and miss the mid-infrared (${MID_IR.low}–${MID_IR.high} cm⁻¹)`,
				firstDataLine,
			),
		)
	}
	warnings.push(...finished.value.warnings)
	const canonicalX = xUnit === 'wavenumber' ? '1/CM' : xUnit === 'micrometres' ? 'MICROMETERS' : 'NANOMETERS'
	const canonicalY = finished.value.ordinate === 'absorbance' ? 'ABSORBANCE' : 'TRANSMITTANCE'
	const labels: Record<string, string> = {}
	if (header !== null) labels['HEADER'] = header
	return ok({
		spectrum,
		metadata: {
			title: null,
			xUnits: xName ?? canonicalX,
			yUnits: yName ?? canonicalY,
			ordinate: finished.value.ordinate,
			format: 'XY text',
			jcampVersion: null,
			firstX: x[0]!,
			lastX: x[x.length - 1]!,
			points: x.length,
			labels,
			dataForm: decimalComma ? `${delimiterName(delimiter)}, decimal comma` : delimiterName(delimiter),
		},
		warnings,
	})
}

/** Decide the delimiter from the first line that holds at least two numbers; null when the line is not data. */
function detectDelimiter(line: string): { delimiter: Delimiter; decimalComma: boolean } | null {
	const candidates: Array<Delimiter> = line.includes('\t')
		? ['tab']
		: line.includes(';')
			? ['semicolon']
			: line.includes(',')
				? ['comma', 'whitespace']
				: ['whitespace']
	for (const delimiter of candidates) {
		const fields = splitFields(line, delimiter).map((f) => f.trim())
		if (fields.length < 2) continue
		const decimalComma = delimiter !== 'comma' && fields.slice(0, 2).some((f) => f.includes(','))
		const numeric = fields.slice(0, 2).every((f) => {
			const cell = decimalComma ? f.replace(',', '.') : f
			return NUMBER.test(cell) || NOT_FINITE.test(cell)
		})
		if (numeric) return { delimiter, decimalComma }
	}
	return null
}

function splitFields(line: string, delimiter: Delimiter): Array<string> {
	switch (delimiter) {
		case 'tab':
			return line.split('\t')
		case 'semicolon':
			return line.split(';')
		case 'comma':
			return line.split(',')
		case 'whitespace':
			return line.split(/\s+/)
	}
}

function splitHeader(header: string, delimiter: Delimiter): Array<string> {
	const cleaned = header.replace(/^[#%]+\s*/, '')
	const parts = splitFields(cleaned, delimiter).map((s) => s.trim().replace(/^"(.*)"$/, '$1'))
	if (parts.length >= 2) return parts
	return cleaned.split(/[,;\t]|\s{2,}/).map((s) => s.trim())
}

function delimiterName(d: Delimiter): string {
	return d
}

function headerXUnit(name: string): XUnitKind | null {
	const n = name.toLowerCase()
	if (/cm\s*(-1|\^-1|⁻¹|\*\*-1)|1\s*\/\s*cm|wavenumber|wave number/.test(n)) return 'wavenumber'
	if (/µm|μm|\bum\b|micron|micromet|wavelength/.test(n)) return 'micrometres'
	if (/\bnm\b|nanomet/.test(n)) return 'nanometres'
	return null
}

function headerOrdinate(name: string): DeclaredOrdinate | 'reflectance' {
	const n = name.toLowerCase()
	if (n.includes('reflect')) return 'reflectance'
	if (/abs|^a$|\(a\)|\bau\b/.test(n)) return 'absorbance'
	if (/%|percent/.test(n)) return 'transmittance-percent'
	if (/transm|^t$/.test(n)) return 'transmittance'
	return 'unknown'
}

/** Without a header: values from 100 up are wavenumbers; 1–100 are µm (mid-IR is 2.5–25 µm); others unknown. */
function guessXUnit(x: Float64Array): XUnitKind | null {
	let min = Infinity
	let max = -Infinity
	for (let i = 0; i < x.length; i++) {
		const v = x[i]!
		if (v < min) min = v
		if (v > max) max = v
	}
	if (min >= 100) return 'wavenumber'
	if (min > 0.5 && max <= 100) return 'micrometres'
	return null
}

function range(x: Float64Array): string {
	let min = Infinity
	let max = -Infinity
	for (let i = 0; i < x.length; i++) {
		const v = x[i]!
		if (v < min) min = v
		if (v > max) max = v
	}
	return `${round(min)} to ${round(max)}`
}

function round(v: number): number {
	return Math.round(v * 100) / 100
}

function clip(s: string): string {
	return s.length > 40 ? `${s.slice(0, 37)}…` : s
}
