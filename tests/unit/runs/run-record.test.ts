import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'
import fc from 'fast-check'
import { describe, expect, test } from 'vitest'

import { canonicalRunRecord, RUN_RECORD_FORMAT, type RunRecordInput, runRecordHash } from '#shared/runs/run-record.ts'
import { canonicalJson, type JsonValue } from '#shared/specs/canonical.ts'
import type { Verdict } from '#shared/spectra/compare.ts'

// Sources:
// - RFC 8785 (JSON Canonicalization Scheme): §3.2.3 property names sorted by UTF-16 code units, no whitespace;
//   §3.2.2.2 strings keep non-ASCII characters as they are; §3.2.2.3 numbers in the shortest ECMAScript form, NaN
//   refused; §3.2.4 the canonical text is hashed as UTF-8 (read as a verbatim copy, FACTS.md conventions READ-2°).
// - The `canonicalize` npm package (by one of the RFC's authors, from memory) as an outside reference.
// - SHA-256 from Node's own crypto (FIPS 180-4) as an outside reference for the digest.
// - 21 CFR 11.70: a signature is linked to its record, so any change to the record must change what was signed
//   (FACTS.md §3.1, READ).
const RFC = 'RFC 8785 (READ-2°)'
const LINKING = '21 CFR 11.70 (FACTS.md §3.1, READ)'

const HEX = (digit: string) => digit.repeat(64)

function record(overrides: Partial<RunRecordInput> = {}): RunRecordInput {
	return {
		runNumber: 'IDR-2026-0007',
		material: { code: 'RM-0120', name: '4-Chloroanilin für Synthese' },
		lot: { lotNumber: 'L2411', supplier: 'Société Chimique', containerCount: 2, receivedOn: '2026-11-30' },
		specification: { documentNumber: 'SPEC-0004', versionNumber: 3, contentSha256: HEX('c') },
		instrument: {
			code: 'IR-02',
			checkId: '0b7c6f7e-2f7b-4e55-9d7a-3f1d2f3a9a10',
			checkPerformedAt: '2026-11-28T08:30:00.000Z',
			checkValidUntil: '2026-12-28T08:30:00.000Z',
		},
		retestOf: null,
		retestReason: null,
		recordedBy: 'user-ana',
		recordedAt: '2026-12-01T09:15:00.000Z',
		// Given out of order on purpose: the record lists containers by number.
		containers: [
			{
				container: 2,
				sampleSha256: HEX('2'),
				sampleFileName: 'L2411-C02.jdx',
				verdict: 'does-not-conform',
				correlation: 0.61234549,
				derivativeCorrelation: null,
				algorithmVersion: 'compare/3',
			},
			{
				container: 1,
				sampleSha256: HEX('1'),
				sampleFileName: 'L2411-C01.jdx',
				verdict: 'conforms',
				correlation: 0.98765432,
				derivativeCorrelation: 0.9,
				algorithmVersion: 'compare/3',
			},
		],
		outcome: 'flagged',
		...overrides,
	}
}

// Written out by hand from the RFC 8785 rules (sorted keys, no whitespace, shortest numbers, UTF-8 kept as is),
// not produced by the code under test.
const EXPECTED_CANONICAL =
	'{"containers":[' +
	`{"algorithmVersion":"compare/3","container":1,"correlation":0.987654,"derivativeCorrelation":0.9,"sampleFileName":"L2411-C01.jdx","sampleSha256":"${HEX('1')}","verdict":"conforms"},` +
	`{"algorithmVersion":"compare/3","container":2,"correlation":0.612345,"derivativeCorrelation":null,"sampleFileName":"L2411-C02.jdx","sampleSha256":"${HEX('2')}","verdict":"does-not-conform"}],` +
	`"format":"${RUN_RECORD_FORMAT}",` +
	'"instrument":{"checkId":"0b7c6f7e-2f7b-4e55-9d7a-3f1d2f3a9a10","checkPerformedAt":"2026-11-28T08:30:00.000Z","checkValidUntil":"2026-12-28T08:30:00.000Z","code":"IR-02"},' +
	'"lot":{"containerCount":2,"lotNumber":"L2411","receivedOn":"2026-11-30","supplier":"Société Chimique"},' +
	'"material":{"code":"RM-0120","name":"4-Chloroanilin für Synthese"},' +
	'"outcome":"flagged","recordedAt":"2026-12-01T09:15:00.000Z","recordedBy":"user-ana","retestOf":null,"retestReason":null,' +
	'"runNumber":"IDR-2026-0007",' +
	`"specification":{"contentSha256":"${HEX('c')}","documentNumber":"SPEC-0004","versionNumber":3}}`

describe(`the canonical run record — ${RFC}`, () => {
	test('serialises to the text derived by hand from the RFC rules, and the canonicalize package agrees', () => {
		const canonical = canonicalJson(canonicalRunRecord(record()))
		expect(canonical).toBe(EXPECTED_CANONICAL)
		expect(canonicalize(canonicalRunRecord(record()))).toBe(EXPECTED_CANONICAL)
	})

	test('the hash is the SHA-256 of the canonical text as UTF-8 (§3.2.4), checked with node:crypto', async () => {
		const expected = createHash('sha256').update(Buffer.from(EXPECTED_CANONICAL, 'utf8')).digest('hex')
		expect(await runRecordHash(record())).toBe(expected)
	})

	test('NaN or an infinite correlation is refused, never hashed (§3.2.2.3)', async () => {
		for (const bad of [Number.NaN, Number.POSITIVE_INFINITY]) {
			const input = record()
			const containers = input.containers.map((row, i) => (i === 0 ? { ...row, correlation: bad } : row))
			await expect(runRecordHash({ ...input, containers })).rejects.toThrow(/NaN and Infinity/)
		}
	})
})

/** The same data with every object's keys in reverse order, recursively. */
function reversedKeys<T>(value: T): T {
	if (Array.isArray(value)) return value.map(reversedKeys) as T
	if (value && typeof value === 'object') {
		return Object.fromEntries(
			Object.entries(value)
				.reverse()
				.map(([key, item]) => [key, reversedKeys(item)]),
		) as T
	}
	return value
}

describe(`independence from presentation — ${RFC} §3.2.3`, () => {
	test('key order of the input, and the order containers are given in, do not change the hash', async () => {
		const base = await runRecordHash(record())
		expect(await runRecordHash(reversedKeys(record()))).toBe(base)
		const input = record()
		expect(await runRecordHash({ ...input, containers: [...input.containers].reverse() })).toBe(base)
	})

	test('fields the record does not name (a wider database row) do not enter the hash', async () => {
		const input = record()
		const wider = {
			...input,
			id: 'run-row-id',
			lot: { ...input.lot, id: 'lot-row-id', createdAt: '2026-11-30T10:00:00.000Z' },
			containers: input.containers.map((row) => ({ ...row, spectrumId: `spectrum-${row.container}`, result: {} })),
		}
		expect(await runRecordHash(wider)).toBe(await runRecordHash(input))
	})

	test('property: any JSON value canonicalises the same whatever its key order, as the canonicalize package does', () => {
		fc.assert(
			fc.property(fc.jsonValue({ maxDepth: 4 }), (value) => {
				const json = value as JsonValue
				const text = canonicalJson(json)
				expect(canonicalJson(reversedKeys(json))).toBe(text)
				expect(canonicalize(json)).toBe(text)
			}),
		)
	})
})

const VERDICTS: ReadonlyArray<Verdict> = ['conforms', 'does-not-conform', 'inconclusive']

/** A run of 1–30 containers with arbitrary verdicts and correlations on the 6-decimal grid the record keeps. */
const containersArbitrary = fc
	.array(
		fc.record({
			verdict: fc.constantFrom(...VERDICTS),
			correlation: fc.option(fc.integer({ min: -1_000_000, max: 1_000_000 }).map((n) => n / 1e6)),
			derivativeCorrelation: fc.option(fc.integer({ min: -1_000_000, max: 1_000_000 }).map((n) => n / 1e6)),
		}),
		{ minLength: 1, maxLength: 30 },
	)
	.map((rows) =>
		rows.map((row, i) => ({
			...row,
			container: i + 1,
			sampleSha256: (i + 1).toString(16).padStart(64, '0'),
			sampleFileName: `L9-C${i + 1}.jdx`,
			algorithmVersion: 'compare/3',
		})),
	)

describe(`the hash follows every container result — ${LINKING}`, () => {
	test('property: changing one container verdict changes the hash', async () => {
		await fc.assert(
			fc.asyncProperty(containersArbitrary, fc.nat(), fc.nat(), async (containers, pick, shift) => {
				const index = pick % containers.length
				const row = containers[index]!
				const verdict = VERDICTS[(VERDICTS.indexOf(row.verdict) + 1 + (shift % 2)) % VERDICTS.length]!
				const changed = containers.map((other, i) => (i === index ? { ...other, verdict } : other))
				const before = await runRecordHash(
					record({ containers, lot: { ...record().lot, containerCount: containers.length } }),
				)
				const after = await runRecordHash(
					record({ containers: changed, lot: { ...record().lot, containerCount: containers.length } }),
				)
				expect(after).not.toBe(before)
			}),
			{ numRuns: 60 },
		)
	})

	test('property: changing one correlation or derivative correlation by a step the record keeps (1e-6) changes the hash', async () => {
		await fc.assert(
			fc.asyncProperty(
				containersArbitrary,
				fc.nat(),
				fc.constantFrom('correlation' as const, 'derivativeCorrelation' as const),
				fc.integer({ min: 1, max: 1000 }).chain((steps) => fc.constantFrom(steps, -steps)),
				async (containers, pick, field, steps) => {
					const index = pick % containers.length
					const row = containers[index]!
					const value = row[field]
					const next = value === null ? 0.5 : Math.round(value * 1e6 + steps) / 1e6
					const changed = containers.map((other, i) => (i === index ? { ...other, [field]: next } : other))
					expect(await runRecordHash(record({ containers: changed }))).not.toBe(
						await runRecordHash(record({ containers })),
					)
				},
			),
			{ numRuns: 60 },
		)
	})

	test('a correlation turning to null (no result) changes the hash', async () => {
		const input = record()
		const containers = input.containers.map((row) => (row.container === 1 ? { ...row, correlation: null } : row))
		expect(await runRecordHash({ ...input, containers })).not.toBe(await runRecordHash(input))
	})

	test('below the 6th decimal the record does not distinguish (float printing noise is not evidence)', async () => {
		const input = record()
		const nudged = input.containers.map((row) =>
			row.container === 1 ? { ...row, correlation: 0.9876541 } : { ...row, correlation: 0.6123451 },
		)
		// 0.98765432 and 0.9876541 both round to 0.987654; 0.61234549 and 0.6123451 both to 0.612345.
		expect(await runRecordHash({ ...input, containers: nudged })).toBe(await runRecordHash(input))
	})

	test.each<[string, Partial<RunRecordInput>]>([
		['the outcome', { outcome: 'conforms' }],
		['the instrument check', { instrument: { ...record().instrument, checkId: 'another-check' } }],
		['the specification content hash', { specification: { ...record().specification, contentSha256: HEX('d') } }],
		['the supplier', { lot: { ...record().lot, supplier: 'Societe Chimique' } }],
		['the retest link', { retestOf: 'IDR-2026-0006', retestReason: 'Container 2 resampled after a mix-up.' }],
		['who recorded it', { recordedBy: 'user-ben' }],
	])('changing %s changes the hash', async (_what, change) => {
		expect(await runRecordHash(record(change))).not.toBe(await runRecordHash(record()))
	})
})
