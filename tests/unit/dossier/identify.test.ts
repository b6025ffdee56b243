/**
 * "Verify a copy": a hash identifies the stored dossier it came from, and anything else is refused.
 */
import { expect, test } from 'vitest'
import { identifyDossier, normalizeSha256, type StoredDossierRecord } from '#shared/dossier/identify.ts'

const PDF_HASH = 'a3f1c2d4e5b60718293a4b5c6d7e8f90112233445566778899aabbccddeeff00'
const DOCX_HASH = '0f1e2d3c4b5a69788796a5b4c3d2e1f00123456789abcdef0123456789abcdef'

const records: Array<StoredDossierRecord> = [
	{
		sha256: PDF_HASH,
		documentNumber: 'CVP-QC-IR-0142',
		versionNumber: 3,
		templateId: 'dossier',
		templateVersion: '1.0.0',
		templateSha256: 'c'.repeat(64),
		format: 'pdf',
	},
	{
		sha256: DOCX_HASH,
		documentNumber: 'CVP-QC-IR-0142',
		versionNumber: 3,
		templateId: 'dossier',
		templateVersion: '1.0.0',
		templateSha256: 'c'.repeat(64),
		format: 'docx',
	},
]

test('a stored hash names the document, version, format and template that made it', () => {
	expect(identifyDossier(records, PDF_HASH)).toEqual({
		status: 'match',
		sha256: PDF_HASH,
		documentNumber: 'CVP-QC-IR-0142',
		versionNumber: 3,
		format: 'pdf',
		template: { id: 'dossier', version: '1.0.0', sha256: 'c'.repeat(64) },
	})
	expect(identifyDossier(records, DOCX_HASH)).toMatchObject({ status: 'match', format: 'docx' })
})

test('a hash typed in groups, upper case, with colons or a sha256: prefix still matches', () => {
	const grouped = PDF_HASH.toUpperCase()
		.match(/.{1,8}/g)!
		.join(' ')
	expect(identifyDossier(records, grouped)).toMatchObject({ status: 'match', sha256: PDF_HASH })
	expect(identifyDossier(records, `sha256: ${PDF_HASH.match(/.{2}/g)!.join(':')}`)).toMatchObject({ status: 'match' })
	expect(normalizeSha256(`\n ${PDF_HASH}\t`)).toBe(PDF_HASH)
})

test('a hash that differs in one digit is no match (a copy changed by one byte has a different hash)', () => {
	const changed = `${PDF_HASH.slice(0, 63)}1`
	expect(identifyDossier(records, changed)).toEqual({ status: 'no-match', sha256: changed })
})

test('input that is not a SHA-256 is refused with a reason, not looked up', () => {
	for (const input of ['', 'abc', PDF_HASH.slice(0, 63), `${PDF_HASH}0`, PDF_HASH.replace('a', 'g')]) {
		const result = identifyDossier(records, input)
		expect(result.status).toBe('invalid')
		if (result.status === 'invalid') expect(result.message).toMatch(/64 hexadecimal digits/)
	}
})

test('the same bytes stored for two different versions are reported as ambiguous, never as one of them', () => {
	const clash = [...records, { ...records[0]!, versionNumber: 4 }]
	const result = identifyDossier(clash, PDF_HASH)
	expect(result.status).toBe('ambiguous')
	if (result.status === 'ambiguous') expect(result.records.map((record) => record.versionNumber)).toEqual([3, 4])
	// The same dossier stored twice (identical record) is still a plain match.
	expect(identifyDossier([...records, { ...records[0]! }], PDF_HASH).status).toBe('match')
})
