import fc from 'fast-check'
import { expect, test } from 'vitest'

import {
	CANONICAL_FORMAT,
	type CanonicalVersionInput,
	canonicalJson,
	canonicalVersionDocument,
	contentHash,
	type JsonValue,
	sha256Hex,
} from '#shared/specs/canonical.ts'
import { emptyVersionContent, type SpecVersionContent, TECHNIQUES } from '#shared/specs/version-content.ts'

// RFC 8785 examples below were read in a verbatim copy of the RFC's text held in a public repository
// (a secondary copy: READ-2° in FACTS.md's terms); they agree with the RFC as remembered.
const RFC = 'RFC 8785 (READ-2°, verbatim copy)'

test(`[HASH-001] the §3.2.2 sample canonicalises to the §3.2.3 output — ${RFC} §3.2.2, §3.2.3`, () => {
	const input = String.raw`{
		"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001],
		"string": "\u20ac$\u000F\u000aA'\u0042\u0022\u005c\\\"\/",
		"literals": [null, true, false]
	}`
	const expected = String.raw`{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\u000f\nA'B\"\\\\\"/"}`
	expect(canonicalJson(JSON.parse(input) as JsonValue)).toBe(expected)
})

test(`[HASH-002] property names sort by UTF-16 code units — ${RFC} §3.2.3 sorting test vector`, () => {
	const input = String.raw`{
		"\u20ac": "Euro Sign",
		"\r": "Carriage Return",
		"\ufb33": "Hebrew Letter Dalet With Dagesh",
		"1": "One",
		"\ud83d\ude00": "Emoji: Grinning Face",
		"\u0080": "Control",
		"\u00f6": "Latin Small Letter O With Diaeresis"
	}`
	const canonical = canonicalJson(JSON.parse(input) as JsonValue)
	// NOTE: read the order from the text: re-parsing would hoist the array-index-like key "1".
	const order = [...canonical.matchAll(/:"([^"]+)"/g)].map((match) => match[1])
	expect(order).toEqual([
		'Carriage Return',
		'One',
		'Control',
		'Latin Small Letter O With Diaeresis',
		'Euro Sign',
		'Emoji: Grinning Face',
		'Hebrew Letter Dalet With Dagesh',
	])
})

test(`[HASH-003] the canonical text is hashed as the §3.2.4 UTF-8 bytes — ${RFC} §3.2.4`, async () => {
	const canonical = String.raw`{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\u000f\nA'B\"\\\\\"/"}`
	const published = `
		7b 22 6c 69 74 65 72 61 6c 73 22 3a 5b 6e 75 6c 6c 2c 74 72
		75 65 2c 66 61 6c 73 65 5d 2c 22 6e 75 6d 62 65 72 73 22 3a
		5b 33 33 33 33 33 33 33 33 33 2e 33 33 33 33 33 33 33 2c 31
		65 2b 33 30 2c 34 2e 35 2c 30 2e 30 30 32 2c 31 65 2d 32 37
		5d 2c 22 73 74 72 69 6e 67 22 3a 22 e2 82 ac 24 5c 75 30 30
		30 66 5c 6e 41 27 42 5c 22 5c 5c 5c 5c 5c 22 2f 22 7d`
	const bytes = Uint8Array.from(published.trim().split(/\s+/), (hex) => Number.parseInt(hex, 16))
	expect(new TextEncoder().encode(canonical)).toEqual(bytes)
	expect(await sha256Hex(canonical)).toBe(await sha256Hex(bytes))
})

// RFC 8785 Appendix B, Table 1: IEEE 754 bit patterns and their JSON serialisation.
const APPENDIX_B: Array<[string, string]> = [
	['0000000000000000', '0'],
	['8000000000000000', '0'],
	['0000000000000001', '5e-324'],
	['8000000000000001', '-5e-324'],
	['7fefffffffffffff', '1.7976931348623157e+308'],
	['ffefffffffffffff', '-1.7976931348623157e+308'],
	['4340000000000000', '9007199254740992'],
	['c340000000000000', '-9007199254740992'],
	['4430000000000000', '295147905179352830000'],
	['44b52d02c7e14af5', '9.999999999999997e+22'],
	['44b52d02c7e14af6', '1e+23'],
	['44b52d02c7e14af7', '1.0000000000000001e+23'],
	['444b1ae4d6e2ef4e', '999999999999999700000'],
	['444b1ae4d6e2ef4f', '999999999999999900000'],
	['444b1ae4d6e2ef50', '1e+21'],
	['3eb0c6f7a0b5ed8c', '9.999999999999997e-7'],
	['3eb0c6f7a0b5ed8d', '0.000001'],
	['41b3de4355555553', '333333333.3333332'],
	['41b3de4355555554', '333333333.33333325'],
	['41b3de4355555555', '333333333.3333333'],
	['41b3de4355555556', '333333333.3333334'],
	['41b3de4355555557', '333333333.33333343'],
	['becbf647612f3696', '-0.0000033333333333333333'],
	['43143ff3c1cb0959', '1424953923781206.2'],
]

function fromIeee754(hex: string): number {
	const view = new DataView(new ArrayBuffer(8))
	view.setBigUint64(0, BigInt(`0x${hex}`))
	return view.getFloat64(0)
}

test.each(APPENDIX_B)(`[HASH-004] IEEE 754 %s serialises as %s — ${RFC} Appendix B, Table 1`, (hex, json) => {
	expect(canonicalJson(fromIeee754(hex))).toBe(json)
})

test(`[HASH-005] NaN, Infinity and lone surrogates are refused — ${RFC} §3.2.2.3 note, §3.2.2.2 note, Appendix B (3)`, () => {
	expect(() => canonicalJson(fromIeee754('7fffffffffffffff'))).toThrow(/NaN|Infinity/)
	expect(() => canonicalJson(fromIeee754('7ff0000000000000'))).toThrow(/NaN|Infinity/)
	expect(() => canonicalJson({ text: 'a\udeadb' })).toThrow(/lone surrogate/)
	expect(() => canonicalJson({ ['\ud83d']: 1 })).toThrow(/lone surrogate/)
	expect(canonicalJson('\ud83d\ude00')).toBe('"😀"')
	// Not plain JSON data (RFC 8785 Appendix E: carry dates as strings) — our rule, so nothing serialises implicitly.
	expect(() => canonicalJson({ at: new Date(0) } as unknown as JsonValue)).toThrow(/plain JSON/)
	expect(() => canonicalJson({ x: undefined } as unknown as JsonValue)).toThrow(/not JSON/)
})

test('[HASH-006] SHA-256 of the FIPS 180-2 examples, of text as UTF-8 and of byte views', async () => {
	// FIPS 180-2 Appendix B.1 ("abc") and the empty message — from memory (well-known digests).
	expect(await sha256Hex('')).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855')
	expect(await sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad')
	const buffer = new TextEncoder().encode('xxabcxx')
	expect(await sha256Hex(buffer.subarray(2, 5))).toBe(await sha256Hex('abc'))
	expect(await sha256Hex(buffer.slice(2, 5).buffer)).toBe(await sha256Hex('abc'))
	expect(await sha256Hex('€')).toBe(await sha256Hex(Uint8Array.of(0xe2, 0x82, 0xac)))
})

const SPECTRUM_HASH = 'c0ffee'.padEnd(64, '0')

function sampleInput(): CanonicalVersionInput {
	const content: SpecVersionContent = {
		...emptyVersionContent(),
		scope: 'Identification of lactose monohydrate by ATR-FTIR.',
		referenceSpectrumId: '6f1c1c7e-3a2b-4c4d-8e8f-111111111111',
		bands: [
			{
				id: 'b1',
				position: 1715,
				tolerance: 4,
				assignment: 'C=O stretch',
				intensityClass: 's',
				shape: 'sharp',
				required: true,
			},
			{
				id: 'b2',
				position: 1030,
				tolerance: null,
				assignment: 'C–O stretch',
				intensityClass: 'vs',
				shape: 'broad',
				required: false,
			},
		],
	}
	return {
		documentNumber: 'SPEC-0042',
		title: 'Lactose monohydrate — identity by FTIR',
		materialCode: 'RM-1001',
		versionNumber: 2,
		content,
		referenceSpectrum: { sha256: SPECTRUM_HASH, fileName: 'lactose-ref.jdx' },
		changeReason: 'Added the C–O band after the specificity study',
	}
}

test('[HASH-007] golden canonical document: its layout is frozen, since old signatures must keep verifying', async () => {
	// Golden value produced by this implementation when the format was fixed (no external source).
	const document = canonicalVersionDocument(sampleInput())
	expect(document.format).toBe(CANONICAL_FORMAT)
	expect(canonicalJson(document)).toBe(
		'{"changeReason":"Added the C–O band after the specificity study","content":{"bands":[{"assignment":"C=O stretch",' +
			'"id":"b1","intensityClass":"s","position":1715,"required":true,"shape":"sharp","tolerance":4},{"assignment":"C–O stretch",' +
			'"id":"b2","intensityClass":"vs","position":1030,"required":false,"shape":"broad","tolerance":null}],"criteria":' +
			'{"defaultBandTolerance":null,"exclusionRegions":[{"from":2280,"label":"Atmospheric CO₂","to":2400}],"minCorrelation":0.95,' +
			'"minDerivativeCorrelation":null,"thresholdJustification":""},"method":{"rangeFrom":650,"rangeTo":4000,"resolution":4,' +
			'"samplePreparation":"","scans":32,"technique":"ATR"},"notes":"","scope":"Identification of lactose monohydrate by ATR-FTIR."},' +
			'"documentNumber":"SPEC-0042","format":"bandproof.spec-version/1","materialCode":"RM-1001","referenceSpectrum":' +
			`{"fileName":"lactose-ref.jdx","sha256":"${SPECTRUM_HASH}"},"title":"Lactose monohydrate — identity by FTIR","versionNumber":2}`,
	)
	expect(await contentHash(document)).toBe(await sha256Hex(canonicalJson(document)))
	expect(await contentHash(document)).toMatch(/^[0-9a-f]{64}$/)
})

test('[HASH-008] volatile and representational details do not change the hash', async () => {
	// 21 CFR 11.70: the signature binds the content, not database identities — FACTS.md §3.1 [READ]. Our choices.
	const base = sampleInput()
	const hash = await contentHash(canonicalVersionDocument(base))
	const otherId = { ...base, content: { ...base.content, referenceSpectrumId: '00000000-0000-4000-8000-000000000000' } }
	expect(await contentHash(canonicalVersionDocument(otherId))).toBe(hash)
	const upper = { ...base, referenceSpectrum: { sha256: SPECTRUM_HASH.toUpperCase(), fileName: 'lactose-ref.jdx' } }
	expect(await contentHash(canonicalVersionDocument(upper))).toBe(hash)
	const first = { ...base, versionNumber: 1, changeReason: null }
	const blank = { ...base, versionNumber: 1, changeReason: '  ' }
	expect(await contentHash(canonicalVersionDocument(blank))).toBe(await contentHash(canonicalVersionDocument(first)))
	const extra = { ...base, content: { ...base.content, stray: 'not part of the schema' } }
	expect(await contentHash(canonicalVersionDocument(extra))).toBe(hash)
})

test('[HASH-009] a swapped spectrum, a reordered band table and a removed band all change the hash', async () => {
	// 21 CFR 11.70 and 11.10(a): a changed record no longer matches its signature — FACTS.md §3.1 [READ].
	const base = sampleInput()
	const hash = await contentHash(canonicalVersionDocument(base))
	const swapped = { ...base, referenceSpectrum: { sha256: 'd'.repeat(64), fileName: 'lactose-ref.jdx' } }
	const reordered = { ...base, content: { ...base.content, bands: [...base.content.bands].reverse() } }
	const removed = { ...base, content: { ...base.content, bands: base.content.bands.slice(1) } }
	for (const changed of [swapped, reordered, removed]) {
		expect(await contentHash(canonicalVersionDocument(changed))).not.toBe(hash)
	}
})

test('[HASH-010] an inconsistent reference spectrum or a malformed digest is refused', () => {
	const base = sampleInput()
	expect(() => canonicalVersionDocument({ ...base, referenceSpectrum: null })).toThrow(/reference spectrum/)
	const unlinked = { ...base, content: { ...base.content, referenceSpectrumId: null } }
	expect(() => canonicalVersionDocument(unlinked)).toThrow(/reference spectrum/)
	expect(() => canonicalVersionDocument({ ...base, referenceSpectrum: { sha256: 'abc', fileName: 'x' } })).toThrow(
		/SHA-256/,
	)
	expect(canonicalVersionDocument({ ...unlinked, referenceSpectrum: null }).referenceSpectrum).toBeNull()
})

// --- property tests -------------------------------------------------------------------------------------------

const text = fc.string({ unit: 'grapheme', maxLength: 20 })
const number = fc.double({ min: -1e6, max: 1e6, noNaN: true, noDefaultInfinity: true })

const arbitraryContent: fc.Arbitrary<SpecVersionContent> = fc.record({
	scope: text,
	method: fc.record({
		technique: fc.constantFrom(...TECHNIQUES),
		rangeFrom: number,
		rangeTo: number,
		resolution: number,
		scans: fc.integer({ min: 1, max: 1000 }),
		samplePreparation: text,
	}),
	referenceSpectrumId: fc.uuid(),
	criteria: fc.record({
		minCorrelation: number,
		minDerivativeCorrelation: fc.option(number, { nil: null }),
		defaultBandTolerance: fc.option(number, { nil: null }),
		exclusionRegions: fc.array(fc.record({ from: number, to: number, label: text }, { requiredKeys: ['from', 'to'] }), {
			maxLength: 3,
		}),
		thresholdJustification: text,
	}),
	bands: fc.array(
		fc.record({
			id: fc.string({ minLength: 1, maxLength: 8 }),
			position: number,
			tolerance: fc.option(number, { nil: null }),
			assignment: text,
			intensityClass: fc.constantFrom(
				'vs' as const,
				's' as const,
				'm' as const,
				'w' as const,
				'vw' as const,
				'v' as const,
			),
			shape: fc.constantFrom('sharp' as const, 'broad' as const),
			required: fc.boolean(),
		}),
		{ maxLength: 4 },
	),
	notes: text,
})

const arbitraryInput: fc.Arbitrary<CanonicalVersionInput> = fc.record({
	documentNumber: text,
	title: text,
	materialCode: text,
	versionNumber: fc.integer({ min: 1, max: 99 }),
	content: arbitraryContent,
	referenceSpectrum: fc.record({ sha256: fc.stringMatching(/^[0-9a-f]{64}$/), fileName: text }),
	changeReason: fc.option(
		text.filter((reason) => reason.trim() !== ''),
		{ nil: null },
	),
})

function rotateKeys(value: unknown, by: number): unknown {
	if (Array.isArray(value)) return value.map((item) => rotateKeys(item, by))
	if (value === null || typeof value !== 'object') return value
	const entries = Object.entries(value)
	const shift = entries.length === 0 ? 0 : by % entries.length
	const rotated = [...entries.slice(shift), ...entries.slice(0, shift)].reverse()
	return Object.fromEntries(rotated.map(([key, item]) => [key, rotateKeys(item, by + 1)]))
}

test('[HASH-011] the canonical text and hash do not depend on key order (fast-check) — RFC 8785 §3.2.3', async () => {
	await fc.assert(
		fc.asyncProperty(arbitraryInput, fc.nat(), async (input, by) => {
			const document = canonicalVersionDocument(input)
			const shuffled = rotateKeys(document, by) as JsonValue
			expect(canonicalJson(shuffled)).toBe(canonicalJson(document))
			const shuffledInput = rotateKeys(input, by) as CanonicalVersionInput
			expect(await contentHash(canonicalVersionDocument(shuffledInput))).toBe(await contentHash(document))
		}),
		{ numRuns: 200 },
	)
})

/** Paths to every leaf of the input except `content.referenceSpectrumId` (deliberately not hashed, see HASH-008). */
function leafPaths(value: unknown, path: Array<string | number> = []): Array<Array<string | number>> {
	if (Array.isArray(value)) return value.flatMap((item, index) => leafPaths(item, [...path, index]))
	if (value !== null && typeof value === 'object') {
		return Object.entries(value).flatMap(([key, item]) =>
			key === 'referenceSpectrumId' ? [] : leafPaths(item, [...path, key]),
		)
	}
	return [path]
}

function mutateLeaf(value: unknown, key: string | number | undefined): unknown {
	if (typeof value === 'boolean') return !value
	if (typeof value === 'number') return value + 1
	if (typeof value === 'string') {
		const [first, ...rest] = Array.from(value)
		return (first === 'a' ? 'b' : 'a') + rest.join('')
	}
	// null leaves: a change reason gets text, every other nullable field a number.
	return key === 'changeReason' ? 'A reason now given' : 1
}

function mutateAt(value: unknown, path: ReadonlyArray<string | number>): unknown {
	if (path.length === 0) return value
	const [head, ...rest] = path
	const container = (Array.isArray(value) ? [...value] : { ...(value as object) }) as Record<string | number, unknown>
	container[head!] = rest.length === 0 ? mutateLeaf(container[head!], head) : mutateAt(container[head!], rest)
	return container
}

test('[HASH-012] any change to any signed field changes the hash (fast-check) — 21 CFR 11.70, FACTS.md §3.1 [READ]', async () => {
	await fc.assert(
		fc.asyncProperty(arbitraryInput, fc.nat(), async (input, pick) => {
			const paths = leafPaths(input)
			const path = paths[pick % paths.length]!
			const changed = mutateAt(input, path) as CanonicalVersionInput
			const before = await contentHash(canonicalVersionDocument(input))
			expect(await contentHash(canonicalVersionDocument(changed)), path.join('.')).not.toBe(before)
		}),
		{ numRuns: 300 },
	)
})
