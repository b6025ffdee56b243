/**
 * JCAMP-DX 4.24 writer for infrared spectra: the ASDF forms (AFFN, PAC, SQZ, DIF, DUP) of `(X++(Y..Y))` and
 * `(XY..XY)` point tables. Used for export and by the importer's round-trip tests. Pure.
 *
 * Reference: McDonald & Wilks 1988, Applied Spectroscopy 42:151 (ASDF pseudo-digits; in DIF form every line after
 * the first starts with the previous line's last ordinate as a Y-check, and the table ends with a check line).
 */
import type { Spectrum } from '#shared/spectra/types.ts'

/** Ordinate encodings of an `(X++(Y..Y))` table. */
export type AsdfForm = 'AFFN' | 'PAC' | 'SQZ' | 'SQZDUP' | 'DIF' | 'DIFDUP'

/** Every way this writer can lay out the data. */
export type JcampForm = AsdfForm | 'XYPOINTS'

export const ASDF_FORMS: ReadonlyArray<AsdfForm> = ['AFFN', 'PAC', 'SQZ', 'SQZDUP', 'DIF', 'DIFDUP']

const SQZ_POSITIVE = '@ABCDEFGHI'
const SQZ_NEGATIVE = '@abcdefghi'
const DIF_POSITIVE = '%JKLMNOPQR'
const DIF_NEGATIVE = '%jklmnopqr'
const DUP_DIGITS = 'STUVWXYZs'

/** Longest data line written; the standard asks for lines of at most 80 characters. */
export const MAX_LINE_LENGTH = 80

export type EncodeJcampInput = {
	title: string
	/** Abscissa of the first and last point, in XUNITS (any order; descending files are common). */
	firstX: number
	lastX: number
	/**
	 * Ordinates as integers in file units: the true value is `ordinates[i] × yFactor`. Each must be a safe integer.
	 * For XYPOINTS, `x` gives the abscissae and `firstX`/`lastX` must equal its ends.
	 */
	ordinates: ArrayLike<number>
	yFactor: number
	/** Abscissae for XYPOINTS tables (true units). Ignored by the `(X++(Y..Y))` forms, which are equally spaced. */
	x?: ArrayLike<number>
	form: JcampForm
	xUnits?: string
	yUnits?: string
	/** Extra labelled records written after the standard header, e.g. { ORIGIN: 'Bandproof' }. */
	labels?: Record<string, string>
	jcampVersion?: '4.24' | '5.01'
	maxLineLength?: number
}

/**
 * Write one infrared spectrum as a JCAMP-DX text (LF line endings). Throws RangeError on programming errors
 * (non-integer ordinates, fewer than two points, mismatched lengths); the data are always written losslessly.
 */
export function encodeJcamp(input: EncodeJcampInput): string {
	const n = input.ordinates.length
	if (n < 2) throw new RangeError('encodeJcamp needs at least two points')
	for (let i = 0; i < n; i++) {
		if (!Number.isSafeInteger(input.ordinates[i])) throw new RangeError(`ordinate ${i} is not a safe integer`)
	}
	if (!(input.yFactor !== 0 && Number.isFinite(input.yFactor)))
		throw new RangeError('yFactor must be finite and non-zero')
	const maxLen = input.maxLineLength ?? MAX_LINE_LENGTH
	let min = Infinity
	let max = -Infinity
	for (let i = 0; i < n; i++) {
		const v = input.ordinates[i]! * input.yFactor
		if (v < min) min = v
		if (v > max) max = v
	}
	const header: Array<[string, string]> = [
		['TITLE', input.title.replace(/[\r\n]+/g, ' ')],
		['JCAMP-DX', input.jcampVersion ?? '4.24'],
		['DATA TYPE', 'INFRARED SPECTRUM'],
		...Object.entries(input.labels ?? {}).map(([k, v]): [string, string] => [k, v.replace(/[\r\n]+/g, ' ')]),
		['XUNITS', input.xUnits ?? '1/CM'],
		['YUNITS', input.yUnits ?? 'ABSORBANCE'],
		['XFACTOR', '1'],
		['YFACTOR', String(input.yFactor)],
		['FIRSTX', String(input.firstX)],
		['LASTX', String(input.lastX)],
	]
	if (input.form !== 'XYPOINTS') header.push(['DELTAX', String((input.lastX - input.firstX) / (n - 1))])
	header.push(
		['MAXY', String(max)],
		['MINY', String(min)],
		['NPOINTS', String(n)],
		['FIRSTY', String(input.ordinates[0]! * input.yFactor)],
	)
	const out = header.map(([k, v]) => `##${k}= ${v}`)
	if (input.form === 'XYPOINTS') {
		const x = input.x
		if (!x || x.length !== n) throw new RangeError('XYPOINTS needs x with one abscissa per ordinate')
		out.push('##XYPOINTS= (XY..XY)')
		let line = ''
		for (let i = 0; i < n; i++) {
			const pair = `${affn(x[i]!)}, ${input.ordinates[i]}`
			if (line !== '' && line.length + 2 + pair.length > maxLen) {
				out.push(line)
				line = ''
			}
			line = line === '' ? pair : `${line}; ${pair}`
		}
		if (line !== '') out.push(line)
	} else {
		out.push('##XYDATA= (X++(Y..Y))')
		const step = (input.lastX - input.firstX) / (n - 1)
		out.push(...encodeAsdfLines(input.ordinates, (i) => input.firstX + i * step, input.form, maxLen))
	}
	out.push('##END=')
	return `${out.join('\n')}\n`
}

/**
 * Data lines of an `(X++(Y..Y))` table in one ASDF form. `xAt(i)` gives the abscissa of point i (written in AFFN at
 * the start of each line). DIF forms repeat each line's last ordinate at the start of the next line (the Y-check)
 * and end with a check line. Lines stay within `maxLen` characters whenever one token fits.
 */
export function encodeAsdfLines(
	ordinates: ArrayLike<number>,
	xAt: (i: number) => number,
	form: AsdfForm,
	maxLen = MAX_LINE_LENGTH,
): Array<string> {
	const n = ordinates.length
	const lines: Array<string> = []
	const dif = form === 'DIF' || form === 'DIFDUP'
	const dup = form === 'DIFDUP' || form === 'SQZDUP'
	let i = 0
	while (i < n) {
		// Each DIF line after the first starts at the previous line's last point (the Y-check value).
		const start = dif && i > 0 ? i - 1 : i
		let committed = affn(xAt(start)) + absolute(ordinates[start]!, form)
		if (start === i) i++
		let runToken = ''
		let runCount = 0
		let added = 0
		while (i < n) {
			const token = dif ? difference(ordinates[i]! - ordinates[i - 1]!) : absolute(ordinates[i]!, form)
			const extends_ = dup && runCount > 0 && token === runToken
			const nextLine = extends_ ? committed + run(runToken, runCount + 1) : committed + run(runToken, runCount) + token
			if (nextLine.length > maxLen && added > 0) break
			if (extends_) {
				runCount++
			} else {
				committed += run(runToken, runCount)
				runToken = token
				runCount = 1
			}
			added++
			i++
		}
		lines.push(committed + run(runToken, runCount))
	}
	if (dif) {
		// Final check line: the abscissa and ordinate of the last point again.
		lines.push(affn(xAt(n - 1)) + absolute(ordinates[n - 1]!, form))
	}
	return lines
}

/** A token repeated `count` times: written out, or with a DUP count when there are several. */
function run(token: string, count: number): string {
	if (count === 0) return ''
	return count === 1 ? token : token + dupCount(count)
}

/**
 * Write a spectrum from the engine (x ascending cm⁻¹, y absorbance) as JCAMP-DX. Ordinates are scaled to integers
 * with a YFACTOR that keeps about nine significant digits. An equally spaced axis (within 1e-9 relative) gives an
 * `(X++(Y..Y))` table in `form`; otherwise an XYPOINTS table.
 */
export function encodeSpectrumJcamp(
	spectrum: Spectrum,
	options: { title: string; form?: AsdfForm; labels?: Record<string, string> },
): string {
	const { x, y } = spectrum
	const n = x.length
	let maxAbs = 0
	for (let i = 0; i < n; i++) maxAbs = Math.max(maxAbs, Math.abs(y[i]!))
	// Nine significant digits of the largest value; tiny spectra (below 1e-290) are written as zeros.
	const yFactor = maxAbs > 1e-290 ? 10 ** (Math.floor(Math.log10(maxAbs)) - 8) : 1
	const ordinates = Array.from(y, (v) => Math.round(v / yFactor))
	const first = x[0]!
	const last = x[n - 1]!
	const step = (last - first) / (n - 1)
	let equal = true
	for (let i = 0; i < n && equal; i++) {
		if (Math.abs(x[i]! - (first + i * step)) > 1e-9 * Math.max(Math.abs(first), Math.abs(last))) equal = false
	}
	return encodeJcamp({
		title: options.title,
		firstX: first,
		lastX: last,
		ordinates,
		yFactor,
		x,
		form: equal ? (options.form ?? 'DIFDUP') : 'XYPOINTS',
		yUnits: 'ABSORBANCE',
		labels: options.labels,
		jcampVersion: '5.01',
	})
}

/** A compact AFFN abscissa (12 significant digits is far finer than any line check needs). */
function affn(v: number): string {
	return String(Number(v.toPrecision(12)))
}

function absolute(v: number, form: AsdfForm): string {
	switch (form) {
		case 'AFFN':
			return ` ${v}`
		case 'PAC':
			return v < 0 ? String(v) : `+${v}`
		case 'SQZ':
		case 'SQZDUP':
		case 'DIF':
		case 'DIFDUP':
			return pseudo(v, SQZ_POSITIVE, SQZ_NEGATIVE)
	}
}

function difference(d: number): string {
	return pseudo(d, DIF_POSITIVE, DIF_NEGATIVE)
}

function pseudo(v: number, positive: string, negative: string): string {
	const digits = String(Math.abs(v))
	const lead = digits.charCodeAt(0) - 48
	return (v < 0 ? negative[lead]! : positive[lead]!) + digits.slice(1)
}

function dupCount(count: number): string {
	const digits = String(count)
	return DUP_DIGITS[digits.charCodeAt(0) - 49]! + digits.slice(1)
}
