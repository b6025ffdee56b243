/**
 * Property tests of the importer: random valid spectra survive our writer → importer round trip in every ASDF form,
 * and random or mutated bytes never throw and always give either a valid spectrum or a typed error.
 */
import fc from 'fast-check'
import { expect, test } from 'vitest'
import { ASDF_FORMS, encodeJcamp, encodeSpectrumJcamp, type JcampForm } from '#shared/spectra/encode-jcamp.ts'
import { importSpectrum } from '#shared/spectra/import.ts'
import type { ImportedSpectrum } from '#shared/spectra/types.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

const FORMS: Array<JcampForm> = [...ASDF_FORMS, 'XYPOINTS']

/** Ordinates with runs of repeated values and of constant differences, so that DUP is exercised. */
const ordinatesArb = fc
	.array(
		fc.tuple(
			fc.integer({ min: -2_000_000_000, max: 2_000_000_000 }),
			fc.integer({ min: 1, max: 12 }),
			fc.constantFrom(0, 0, 1, -1, 7, -250),
		),
		{ minLength: 1, maxLength: 60 },
	)
	.map((runs) => runs.flatMap(([start, length, step]) => Array.from({ length }, (_, i) => start + i * step)))
	.filter((values) => values.length >= 2)

/** Invariants of every accepted import (shared/spectra/types.ts contract). */
function expectValid(value: ImportedSpectrum) {
	const { x, y } = value.spectrum
	expect(x.length).toBe(y.length)
	expect(x.length).toBeGreaterThanOrEqual(2)
	expect(value.metadata.points).toBe(x.length)
	let ok = true
	for (let i = 0; i < x.length; i++) {
		if (!Number.isFinite(x[i]!) || !Number.isFinite(y[i]!)) ok = false
		if (i > 0 && !(x[i]! > x[i - 1]!)) ok = false
	}
	expect(ok).toBe(true)
}

function expectTypedRefusal(bytes: Uint8Array) {
	let result: ReturnType<typeof importSpectrum> | undefined
	expect(() => {
		result = importSpectrum(bytes)
	}).not.toThrow()
	if (result === undefined) return
	if (result.ok) {
		expectValid(result.value)
	} else {
		expect(result.error.code).not.toBe('internal')
		expect(result.error.message).not.toContain('\n')
		expect(result.error.message.length).toBeGreaterThan(5)
	}
}

test('JCAMP-DX 4.24 ASDF forms (McDonald & Wilks 1988): random spectra survive encode → import unchanged in every form', () => {
	fc.assert(
		fc.property(
			ordinatesArb,
			fc.constantFrom(...FORMS),
			fc.double({ min: 400, max: 1500, noNaN: true }),
			fc.double({ min: 2000, max: 4500, noNaN: true }),
			fc.boolean(),
			fc.constantFrom(1, 0.001, 1e-6, 2.384185791e-9),
			fc.integer({ min: 16, max: 80 }),
			(ordinates, form, low, high, descending, yFactor, maxLineLength) => {
				const n = ordinates.length
				const [firstX, lastX] = descending ? [high, low] : [low, high]
				const step = (lastX - firstX) / (n - 1)
				const x = Array.from({ length: n }, (_, i) => firstX + i * step)
				const text = encodeJcamp({
					title: 'round trip',
					firstX,
					lastX: x[n - 1]!,
					ordinates,
					yFactor,
					x,
					form,
					maxLineLength,
				})
				const result = importSpectrum(new TextEncoder().encode(text))
				if (!result.ok) throw new Error(`${form}: ${result.error.message}\n${text}`)
				expectValid(result.value)
				const expectedY = ordinates.map((v) => v * yFactor)
				const expectedX = x.slice()
				if (descending) {
					expectedY.reverse()
					expectedX.reverse()
				}
				// Exact: the importer multiplies the same integers by the same YFACTOR.
				expect(Array.from(result.value.spectrum.y)).toEqual(expectedY)
				const dx = Math.max(...Array.from(result.value.spectrum.x, (v, i) => Math.abs(v - expectedX[i]!)))
				expect(dx).toBeLessThan(1e-6)
				if (form !== 'XYPOINTS')
					expect(
						result.value.metadata.dataForm === form || ordinates.length < 3 || form.endsWith('DUP') || form === 'AFFN',
					).toBe(true)
			},
		),
		{ numRuns: 300 },
	)
})

test('units (common practice, no source): transmittance written by our writer comes back as A = −log10 T', () => {
	fc.assert(
		fc.property(
			// Above MIN_TRANSMITTANCE (1e-5), below which values are clipped by design.
			fc.array(fc.integer({ min: 11, max: 1_000_000 }), { minLength: 2, maxLength: 300 }),
			fc.constantFrom(...FORMS),
			(ordinates, form) => {
				const n = ordinates.length
				const x = Array.from({ length: n }, (_, i) => 500 + (i * 3000) / (n - 1))
				const text = encodeJcamp({
					title: 'T',
					firstX: 500,
					lastX: 3500,
					ordinates,
					yFactor: 1e-6,
					x,
					form,
					yUnits: 'TRANSMITTANCE',
				})
				const result = importSpectrum(new TextEncoder().encode(text))
				if (!result.ok) throw new Error(result.error.message)
				expect(result.value.metadata.ordinate).toBe('transmittance-fraction')
				const worst = Math.max(
					...Array.from(result.value.spectrum.y, (a, i) => Math.abs(a + Math.log10(ordinates[i]! * 1e-6))),
				)
				expect(worst).toBeLessThan(1e-12)
			},
		),
		{ numRuns: 100 },
	)
})

test('export: a spectrum written by encodeSpectrumJcamp re-imports to within its nine significant digits', () => {
	fc.assert(
		fc.property(
			fc.array(
				fc.integer({ min: -500_000, max: 4_000_000 }).map((v) => v / 1e6),
				{ minLength: 2, maxLength: 500 },
			),
			fc.constantFrom(...ASDF_FORMS),
			(values, form) => {
				const n = values.length
				const x = Float64Array.from({ length: n }, (_, i) => 650 + (i * 3350) / (n - 1))
				const text = encodeSpectrumJcamp({ x, y: Float64Array.from(values) }, { title: 'export', form })
				const result = importSpectrum(new TextEncoder().encode(text))
				if (!result.ok) throw new Error(result.error.message)
				const scale = Math.max(...values.map(Math.abs))
				const worst = Math.max(...Array.from(result.value.spectrum.y, (v, i) => Math.abs(v - values[i]!)))
				expect(worst).toBeLessThanOrEqual(scale * 1e-8)
			},
		),
		{ numRuns: 100 },
	)
})

test('random bytes never throw and always give a typed error or a valid spectrum', () => {
	fc.assert(
		fc.property(fc.uint8Array({ maxLength: 3000 }), (bytes) => expectTypedRefusal(bytes)),
		{ numRuns: 500 },
	)
})

test('random text in the JCAMP-DX alphabet never throws and always gives a typed error or a valid spectrum', () => {
	const alphabet = '@ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrs%+-.,;0123456789 \n\t#=$?'
	const header =
		'##TITLE= fuzz\n##JCAMP-DX= 4.24\n##DATA TYPE= INFRARED SPECTRUM\n##XUNITS= 1/CM\n##YUNITS= ABSORBANCE\n##XYDATA= (X++(Y..Y))\n'
	fc.assert(
		fc.property(fc.string({ unit: fc.constantFrom(...alphabet), maxLength: 600 }), fc.boolean(), (body, withHeader) =>
			expectTypedRefusal(new TextEncoder().encode((withHeader ? header : '') + body)),
		),
		{ numRuns: 500 },
	)
})

const MUTATED = [
	'polystyrene/ps_film_digilab3240_4cm_DIFDUP.jdx',
	'compounds/indene_DIFDUP_transmittance.jdx',
	'format/cr_line_endings_mass_spectrum.jdx',
	'format/derived/ps_film_XYPOINTS_MICROMETERS.jdx',
	'polystyrene/ps_film_atr_diamond_nrcan.csv',
	'format/link_5_ir_blocks_pe1600.jdx',
]

test.each(MUTATED)('mutated bytes of %s never throw and give a typed error or a valid spectrum', (file) => {
	const original = readReferenceFile(file)
	const interesting = [...new TextEncoder().encode('@AJjS%+-.,#=$\n\r 09eE?'), 0, 0xff, 0xfe]
	const mutation = fc.record({
		edits: fc.array(
			fc.record({
				at: fc.nat({ max: original.length - 1 }),
				kind: fc.constantFrom('replace', 'delete', 'insert'),
				byte: fc.oneof(fc.constantFrom(...interesting), fc.integer({ min: 0, max: 255 })),
			}),
			{ minLength: 1, maxLength: 8 },
		),
		cut: fc.option(fc.nat({ max: original.length }), { freq: 4 }),
	})
	fc.assert(
		fc.property(mutation, ({ edits, cut }) => {
			const bytes = Array.from(cut === null ? original : original.subarray(0, cut))
			for (const { at, kind, byte } of edits) {
				const i = Math.min(at, Math.max(0, bytes.length - 1))
				if (kind === 'replace') bytes[i] = byte
				else if (kind === 'delete') bytes.splice(i, 1)
				else bytes.splice(i, 0, byte)
			}
			expectTypedRefusal(Uint8Array.from(bytes))
		}),
		{ numRuns: 150 },
	)
})
