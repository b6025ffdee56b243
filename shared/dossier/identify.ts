/**
 * "Verify a copy": given the stored dossier records and the SHA-256 of a file (computed from an upload, or typed by
 * a reader from elsewhere), say whether it is a dossier this system rendered, and which document, version and
 * template made it. Pure: the caller loads the records and hashes the upload.
 */

export type DossierFormat = 'pdf' | 'docx'

export type StoredDossierRecord = {
	/** SHA-256 of the rendered file's bytes, 64 hex digits. */
	sha256: string
	documentNumber: string
	versionNumber: number
	templateId: string
	templateVersion: string
	templateSha256: string
	format: DossierFormat
}

export type DossierIdentification =
	| { status: 'invalid'; message: string }
	| { status: 'no-match'; sha256: string }
	| {
			status: 'match'
			sha256: string
			documentNumber: string
			versionNumber: number
			format: DossierFormat
			template: { id: string; version: string; sha256: string }
	  }
	/** The same bytes are stored for different documents or versions: a data fault the reader must be told about. */
	| { status: 'ambiguous'; sha256: string; records: Array<StoredDossierRecord> }

/**
 * Reduces typed input to 64 lowercase hex digits: readers copy hashes with spaces, line breaks, colons or an
 * `sha256:` prefix, and in either case. Returns null when what is left is not a SHA-256.
 */
export function normalizeSha256(input: string): string | null {
	const cleaned = input
		.trim()
		.replace(/^sha-?256\s*[:=]?\s*/i, '')
		.replace(/[\s:-]/g, '')
		.toLowerCase()
	return /^[0-9a-f]{64}$/.test(cleaned) ? cleaned : null
}

/** Looks `hash` up among `records` (any order). A changed byte changes the hash, so it simply finds nothing. */
export function identifyDossier(records: ReadonlyArray<StoredDossierRecord>, hash: string): DossierIdentification {
	const sha256 = normalizeSha256(hash)
	if (sha256 === null) {
		return {
			status: 'invalid',
			message: 'A SHA-256 is 64 hexadecimal digits (0–9, a–f); spaces and colons are ignored.',
		}
	}
	const matches = records.filter((record) => record.sha256.toLowerCase() === sha256)
	const first = matches[0]
	if (first === undefined) return { status: 'no-match', sha256 }
	const sameSource = matches.every(
		(record) =>
			record.documentNumber === first.documentNumber &&
			record.versionNumber === first.versionNumber &&
			record.format === first.format &&
			record.templateSha256 === first.templateSha256,
	)
	if (!sameSource) return { status: 'ambiguous', sha256, records: matches.map((record) => ({ ...record })) }
	return {
		status: 'match',
		sha256,
		documentNumber: first.documentNumber,
		versionNumber: first.versionNumber,
		format: first.format,
		template: { id: first.templateId, version: first.templateVersion, sha256: first.templateSha256 },
	}
}
