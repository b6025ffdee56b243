/**
 * Document numbers from a configurable pattern. Placeholders: {seq} or {seq:N} (zero-padded to N digits)
 * and {yyyy} (the year the specification is created). Default: QC-IR-{seq:4} → QC-IR-0007.
 */
export const DEFAULT_DOCUMENT_NUMBER_PATTERN = 'QC-IR-{seq:4}'

const PLACEHOLDER = /\{(seq)(?::(\d{1,2}))?\}|\{yyyy\}/g

/** True when the pattern has a sequence placeholder (without one every number would be the same). */
export function isValidDocumentNumberPattern(pattern: string): boolean {
	return /\{seq(?::\d{1,2})?\}/.test(pattern) && pattern.length <= 60
}

export function formatDocumentNumber(pattern: string, sequence: number, year: number): string {
	if (!isValidDocumentNumberPattern(pattern)) throw new Error(`document number pattern needs {seq}: ${pattern}`)
	return pattern.replace(PLACEHOLDER, (match, _seq: string | undefined, width: string | undefined) =>
		match === '{yyyy}' ? String(year) : String(sequence).padStart(width ? Number(width) : 1, '0'),
	)
}
