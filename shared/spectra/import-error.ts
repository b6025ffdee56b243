import { DomainError } from '#shared/errors.ts'

/**
 * Why a file was refused. Stable identifiers: the UI, the API and the CLI may switch on them.
 * - empty, binary, too-large: the bytes themselves
 * - not-infrared: a valid file of another kind (mass spectrum, NMR, UV/Vis…)
 * - no-data: no data table, or too few points
 * - truncated: the file ends inside the data
 * - ycheck: a DIF line's check value differs from the previous line's last ordinate
 * - npoints, firstx, lastx, xcheck: header and data disagree about the abscissa
 * - bad-character, bad-number, bad-label, dup: the text cannot be decoded
 * - nan: a value is NaN or infinite
 * - units: missing or unusable XUNITS/YUNITS (or text whose units cannot be told)
 * - x-order: abscissae not strictly monotonic (or repeated)
 * - repeated-label: one of the labels the data depend on is given twice with different values
 * - unsupported: a valid JCAMP-DX construct we do not read (NTUPLES, complex data…)
 * - internal: a bug in the importer; reported instead of thrown so that no stack trace reaches a user
 */
export type SpectrumImportErrorCode =
	| 'empty'
	| 'binary'
	| 'too-large'
	| 'not-infrared'
	| 'no-data'
	| 'truncated'
	| 'ycheck'
	| 'npoints'
	| 'firstx'
	| 'lastx'
	| 'xcheck'
	| 'bad-character'
	| 'bad-number'
	| 'bad-label'
	| 'dup'
	| 'nan'
	| 'units'
	| 'x-order'
	| 'repeated-label'
	| 'unsupported'
	| 'internal'

/** A file the importer refuses, with a message a person understands (it names the line or label). */
export class SpectrumImportError extends DomainError {
	readonly code: SpectrumImportErrorCode
	/** 1-based line number in the file, when the problem sits on one line. */
	readonly line: number | undefined

	constructor(code: SpectrumImportErrorCode, message: string, line?: number) {
		// One line for a person: file content quoted in a message must not break it.
		const oneLine = message.replace(/\s*[\r\n]+\s*/g, ' ')
		super(line === undefined ? oneLine : `line ${line}: ${oneLine}`, code === 'too-large' ? 413 : 422)
		this.code = code
		this.line = line
	}
}
