/**
 * The one entry point for reading a spectrum file: bytes in, absorbance on a cm⁻¹ axis out, or a typed refusal.
 * Pure (no I/O, no clock); safe in the browser, the server, the API and the CLI.
 */
import { err, type Result } from '#shared/errors.ts'
import { SpectrumImportError } from '#shared/spectra/import-error.ts'
import { MAX_POINTS } from '#shared/spectra/import-finish.ts'
import { importJcamp } from '#shared/spectra/import-jcamp.ts'
import { importText } from '#shared/spectra/import-text.ts'
import type { ImportedSpectrum } from '#shared/spectra/types.ts'

export { SpectrumImportError, type SpectrumImportErrorCode } from '#shared/spectra/import-error.ts'

/** Default upper bound on the file size: 20 MB. A 0.5 cm⁻¹ mid-IR spectrum in AFFN is well under 1 MB. */
export const DEFAULT_MAX_IMPORT_BYTES = 20 * 1024 * 1024

/**
 * Share of control bytes (other than tab, line feed, carriage return, form feed, vertical tab and the old DOS
 * end-of-file mark) above which a file counts as binary. Text files have none; a stray one is tolerated.
 */
const BINARY_CONTROL_SHARE = 0.01

export type ImportOptions = {
	/** Used only in messages and as a format hint; content decides. */
	fileName?: string
	/** Refuse files larger than this many bytes (default {@link DEFAULT_MAX_IMPORT_BYTES}). */
	maxBytes?: number
	/** Refuse data that expand beyond this many points (default 2,000,000). */
	maxPoints?: number
}

/**
 * Import a spectrum file: JCAMP-DX (4.24, 5.x; AFFN/PAC/SQZ/DIF/DUP, XYPOINTS, PEAK TABLE, LINK) or XY text
 * (CSV/TSV/semicolon/whitespace). Accepts UTF-8, UTF-16 (with BOM) and Latin-1/Windows-1252 bytes, any line endings.
 * Result: `spectrum.x` in cm⁻¹ strictly ascending, `spectrum.y` decadic absorbance, metadata as found in the file,
 * and warnings for everything that was guessed, clipped or ignored. Refusals are {@link SpectrumImportError}s whose
 * message names the line or label; this function never throws.
 */
export function importSpectrum(
	bytes: Uint8Array,
	options: ImportOptions = {},
): Result<ImportedSpectrum, SpectrumImportError> {
	try {
		return importBytes(bytes, options)
	} catch (e) {
		// A bug, not a property of the file. Reported as a typed error so no stack trace reaches a person.
		const detail = e instanceof Error ? e.message : String(e)
		return err(
			new SpectrumImportError('internal', `the file could not be read because of an internal error (${detail})`),
		)
	}
}

function importBytes(bytes: Uint8Array, options: ImportOptions): Result<ImportedSpectrum, SpectrumImportError> {
	const maxBytes = options.maxBytes ?? DEFAULT_MAX_IMPORT_BYTES
	const maxPoints = options.maxPoints ?? MAX_POINTS
	if (bytes.length === 0) return err(new SpectrumImportError('empty', 'the file is empty (0 bytes)'))
	if (bytes.length > maxBytes) {
		return err(
			new SpectrumImportError(
				'too-large',
				`the file is ${formatBytes(bytes.length)}, more than the ${formatBytes(maxBytes)} allowed`,
			),
		)
	}
	const decoded = decodeText(bytes)
	if (!decoded.ok) return decoded
	const { text, encoding } = decoded.value
	if (text.trim() === '') return err(new SpectrumImportError('empty', 'the file holds only blank space'))
	const result = looksLikeJcamp(text) ? importJcamp(text, { maxPoints }) : importText(text, { maxPoints })
	if (result.ok) result.value.metadata.sourceEncoding = encoding
	return result
}

type Decoded = { text: string; encoding: string }

/**
 * Bytes to text. A BOM decides (UTF-8, UTF-16LE/BE); UTF-16 without BOM is recognised by its zero bytes;
 * otherwise strict UTF-8, falling back to Windows-1252 (a superset of printable Latin-1) for older files.
 * Files with NUL bytes or many control bytes are refused as binary.
 */
function decodeText(bytes: Uint8Array): Result<Decoded, SpectrumImportError> {
	const b0 = bytes[0]
	const b1 = bytes[1]
	if (b0 === 0xff && b1 === 0xfe) return decodeWith('utf-16le', bytes.subarray(2))
	if (b0 === 0xfe && b1 === 0xff) return decodeWith('utf-16be', bytes.subarray(2))
	if (b0 === 0xef && b1 === 0xbb && bytes[2] === 0xbf) return checkBinary(bytes.subarray(3), 'utf-8')
	const utf16 = utf16WithoutBom(bytes)
	if (utf16 !== null) return decodeWith(utf16, bytes)
	return checkBinary(bytes, null)
}

function decodeWith(encoding: 'utf-16le' | 'utf-16be', bytes: Uint8Array): Result<Decoded, SpectrumImportError> {
	const text = new TextDecoder(encoding).decode(bytes)
	let control = 0
	for (let i = 0; i < text.length; i++) {
		const c = text.charCodeAt(i)
		if (c === 0 || c === 0xfffd || (c < 32 && c !== 9 && c !== 10 && c !== 13 && c !== 12 && c !== 11 && c !== 26))
			control++
	}
	if (control > Math.max(1, text.length * BINARY_CONTROL_SHARE)) {
		return err(
			new SpectrumImportError('binary', `the file starts like ${encoding.toUpperCase()} text but holds binary data`),
		)
	}
	return { ok: true, value: { text, encoding } }
}

function checkBinary(bytes: Uint8Array, knownEncoding: 'utf-8' | null): Result<Decoded, SpectrumImportError> {
	let control = 0
	let firstNul = -1
	let high = false
	for (let i = 0; i < bytes.length; i++) {
		const c = bytes[i]!
		if (c < 32) {
			if (c === 0 && firstNul < 0) firstNul = i
			if (c !== 9 && c !== 10 && c !== 13 && c !== 12 && c !== 11 && c !== 26) control++
		} else if (c === 127) control++
		else if (c >= 128) high = true
	}
	if (firstNul >= 0 || control > Math.max(1, bytes.length * BINARY_CONTROL_SHARE)) {
		const why = firstNul >= 0 ? `a zero byte at offset ${firstNul}` : `${control} control bytes`
		return err(
			new SpectrumImportError(
				'binary',
				`this is a binary file, not text (${why}); JCAMP-DX and XY text files are read`,
			),
		)
	}
	if (!high) return { ok: true, value: { text: asciiToString(bytes), encoding: knownEncoding ?? 'ascii' } }
	try {
		return { ok: true, value: { text: new TextDecoder('utf-8', { fatal: true }).decode(bytes), encoding: 'utf-8' } }
	} catch {
		return { ok: true, value: { text: new TextDecoder('windows-1252').decode(bytes), encoding: 'windows-1252' } }
	}
}

/** ASCII bytes decode identically under any of our encodings; latin1 (windows-1252) decoding is the fastest path. */
function asciiToString(bytes: Uint8Array): string {
	return new TextDecoder('windows-1252').decode(bytes)
}

/** UTF-16 without BOM: most bytes at odd (LE) or even (BE) offsets are zero in the first kilobyte. */
function utf16WithoutBom(bytes: Uint8Array): 'utf-16le' | 'utf-16be' | null {
	const n = Math.min(bytes.length, 1024) & ~1
	if (n < 4) return null
	let evenZero = 0
	let oddZero = 0
	for (let i = 0; i < n; i += 2) {
		if (bytes[i] === 0) evenZero++
		if (bytes[i + 1] === 0) oddZero++
	}
	const pairs = n / 2
	if (oddZero > pairs * 0.9 && evenZero < pairs * 0.1) return 'utf-16le'
	if (evenZero > pairs * 0.9 && oddZero < pairs * 0.1) return 'utf-16be'
	return null
}

/** JCAMP-DX when a line starts with a `##LABEL=` record within the first few kilobytes. */
function looksLikeJcamp(text: string): boolean {
	return /^[ \t]*##[^=\r\n]*=/m.test(text.slice(0, 8192))
}

function formatBytes(n: number): string {
	if (n >= 1024 * 1024) return `${Math.round((n / 1024 / 1024) * 10) / 10} MB`
	if (n >= 1024) return `${Math.round((n / 1024) * 10) / 10} kB`
	return `${n} bytes`
}
