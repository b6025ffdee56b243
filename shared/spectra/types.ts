/**
 * The engine's shared vocabulary. Everything under shared/spectra is pure: no I/O, no clock,
 * no react, no node:* imports, so the browser, the server, the API and the CLI can all use it.
 */

/**
 * A spectrum on a wavenumber axis.
 * `x` is in cm⁻¹ and strictly ascending; `y` is absorbance (decadic, A = −log10 T).
 * Both arrays have the same length.
 */
export type Spectrum = {
	x: Float64Array
	y: Float64Array
}

/** How the ordinate was stored in the source file before conversion to absorbance. */
export type OrdinateKind = 'absorbance' | 'transmittance-fraction' | 'transmittance-percent'

export type SpectrumMetadata = {
	title: string | null
	/** Source-file units as written, e.g. '1/CM', 'MICROMETERS', 'TRANSMITTANCE'. */
	xUnits: string
	yUnits: string
	ordinate: OrdinateKind
	/** 'JCAMP-DX' or 'XY text' */
	format: 'JCAMP-DX' | 'XY text'
	/** JCAMP-DX version string when present, e.g. '4.24' or '5.01'. */
	jcampVersion: string | null
	/** First and last abscissa as found in the file, in the file's own units and order. */
	firstX: number
	lastX: number
	points: number
	/** Every other labelled record kept verbatim (uppercase label → value), e.g. ORIGIN, OWNER, RESOLUTION. */
	labels: Record<string, string>
	/** How the data table was written: 'AFFN', 'PAC', 'SQZ', 'SQZDUP', 'DIF', 'DIFDUP', 'XYPOINTS', 'PEAK TABLE', or the text delimiter ('comma', 'semicolon', 'tab', 'whitespace'). */
	dataForm?: string
	/** Character encoding the bytes were read with, e.g. 'utf-8', 'utf-16le', 'windows-1252'. */
	sourceEncoding?: string
}

export type ImportWarning = { code: string; message: string; line?: number }

export type ImportedSpectrum = {
	spectrum: Spectrum
	metadata: SpectrumMetadata
	warnings: Array<ImportWarning>
}
