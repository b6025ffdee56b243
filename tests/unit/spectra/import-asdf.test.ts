/**
 * The JCAMP-DX rule that every compressed form (PAC, SQZ, DIF, DUP) stands for exactly the numbers of the plain
 * AFFN form (McDonald & Wilks 1988, Applied Spectroscopy 42:151, ASDF section), checked on the published test
 * vectors and on real files that SOURCES.md says hold the same spectrum in different encodings.
 */
import { expect, test } from 'vitest'
import { importSpectrum } from '#shared/spectra/import.ts'
import type { Spectrum } from '#shared/spectra/types.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

function jcamp(lines: Array<string>, header: Record<string, string | number>): Uint8Array {
	const head = Object.entries({
		TITLE: 'vector',
		'JCAMP-DX': '4.24',
		'DATA TYPE': 'INFRARED SPECTRUM',
		XUNITS: '1/CM',
		YUNITS: 'ABSORBANCE',
		XFACTOR: 1,
		YFACTOR: 1,
		...header,
	})
	const text = [...head.map(([k, v]) => `##${k}= ${v}`), '##XYDATA= (X++(Y..Y))', ...lines, '##END=', ''].join('\n')
	return new TextEncoder().encode(text)
}

function load(relPath: string): Spectrum {
	const result = importSpectrum(readReferenceFile(relPath), { fileName: relPath })
	if (!result.ok) throw new Error(`${relPath}: ${result.error.message}`)
	return result.value.spectrum
}

function transmittance(s: Spectrum): Array<number> {
	return Array.from(s.y, (a) => 10 ** -a)
}

function pearson(a: ArrayLike<number>, b: ArrayLike<number>): number {
	let ma = 0
	let mb = 0
	for (let i = 0; i < a.length; i++) {
		ma += a[i]!
		mb += b[i]!
	}
	ma /= a.length
	mb /= b.length
	let ab = 0
	let aa = 0
	let bb = 0
	for (let i = 0; i < a.length; i++) {
		ab += (a[i]! - ma) * (b[i]! - mb)
		aa += (a[i]! - ma) ** 2
		bb += (b[i]! - mb) ** 2
	}
	return ab / Math.sqrt(aa * bb)
}

// FACTS.md §4.4(a): Table VIIb of McDonald & Wilks (1988); all encodings decode to 1 2 3 3 2 1 0 −1 −2 −3.
// The published strings hold ordinates only; we put an abscissa (1000) and a blank in front of each.
const TABLE_VIIB = [
	{ form: 'FIX', data: '1 2 3 3 2 1 0 -1 -2 -3' },
	{ form: 'FIX (double blanks)', data: '1  2  3  3  2  1  0 -1 -2 -3' },
	{ form: 'PAC', data: '1+2+3+3+2+1+0-1-2-3' },
	{ form: 'PAC (mixed)', data: '1 2 3 3 2 1 0-1-2-3' },
	{ form: 'SQZ', data: '1BCCBA@abc' },
	{ form: 'DIF', data: '1JJ%jjjjjj' },
	{ form: 'DIFDUP', data: '1JT%jX' },
]

test.each(TABLE_VIIB)(
	'McDonald & Wilks 1988 Table VIIb: the $form string decodes to 1 2 3 3 2 1 0 -1 -2 -3',
	({ data }) => {
		const result = importSpectrum(jcamp([`1000 ${data}`], { FIRSTX: 1000, LASTX: 1009, NPOINTS: 10 }))
		if (!result.ok) throw new Error(result.error.message)
		expect(Array.from(result.value.spectrum.y)).toEqual([1, 2, 3, 3, 2, 1, 0, -1, -2, -3])
		expect(Array.from(result.value.spectrum.x)).toEqual([1000, 1001, 1002, 1003, 1004, 1005, 1006, 1007, 1008, 1009])
	},
)

// FACTS.md §4.4(b): Table VI of McDonald & Wilks (1988), 53 ordinates, with the corrected DIFDUP string
// (Baumbach et al. 2001) and its Y-check line "700.158A28".
const TABLE_VI_AFFN = [
	'599.860 0 0 0 0 2 4 4 4 7 5 4 4 5 5 7 10 11 11 6 5 7 6 9 9 7',
	'648.081 10 10 9 10 11 12 15 16 16 14 17 38 38 35 38 42 47 54',
	'682.799  59  66  75  78  88  96 104 110 121 128',
]
const TABLE_VI_DIFDUP = ['599.860@VKT%TLkj%J%KLJ%njKjL%kL%jJULJ%kLK1%lLMNPNPRLJ0QTOJ1P', '700.158A28']
const TABLE_VI_HEADER = { FIRSTX: 599.86, LASTX: 700.158, NPOINTS: 53, YFACTOR: 0.001 }

test('McDonald & Wilks 1988 Table VI: the DIFDUP form with its Y-check line gives the 53 ordinates of the AFFN form', () => {
	const affn = importSpectrum(jcamp(TABLE_VI_AFFN, TABLE_VI_HEADER))
	const difdup = importSpectrum(jcamp(TABLE_VI_DIFDUP, TABLE_VI_HEADER))
	if (!affn.ok || !difdup.ok) throw new Error('refused')
	expect(difdup.value.spectrum.y.length).toBe(53)
	expect(Array.from(difdup.value.spectrum.y)).toEqual(Array.from(affn.value.spectrum.y))
	expect(Array.from(difdup.value.spectrum.x)).toEqual(Array.from(affn.value.spectrum.x))
	expect(difdup.value.metadata.dataForm).toBe('DIFDUP')
	// FACTS.md §4.4(b) [DERIVED]: the implied spacing (700.158 − 599.860)/52 = 1.92881 cm⁻¹.
	expect(difdup.value.spectrum.x[1]! - difdup.value.spectrum.x[0]!).toBeCloseTo(1.92881, 5)
})

test('McDonald & Wilks 1988 (DIF Y-check): a check value that differs from the last ordinate is refused on its line', () => {
	const broken = [TABLE_VI_DIFDUP[0]!, '700.158A29']
	const result = importSpectrum(jcamp(broken, TABLE_VI_HEADER))
	if (result.ok) throw new Error('accepted')
	expect(result.error.code).toBe('ycheck')
	// Header lines 1–10, ##XYDATA= on 11, data on 12 and 13.
	expect(result.error.message).toBe(
		'line 13: the DIF check value 129 does not match the last ordinate of line 12 (128)',
	)
})

test('FACTS.md §4.3 (error cases implementations reject): a line that starts with a DIF token, two DUPs in a row, a DUP with nothing before it', () => {
	const header = { FIRSTX: 1000, LASTX: 1009, NPOINTS: 10 }
	const cases: Array<[string, string]> = [
		['1000J1JJ%jjjjjj', 'bad-character'],
		['1000 1JTT%jX', 'dup'],
		['1000T1JT%jX', 'dup'],
		['1000 1JT%jX  $$ a comment is fine', 'ok'],
	]
	for (const [line, code] of cases) {
		const result = importSpectrum(jcamp([line], header))
		expect(result.ok ? 'ok' : result.error.code, line).toBe(code)
	}
})

test('FACTS.md §4.3: "E" with a sign and a digit is an exponent, otherwise the SQZ digit +5', () => {
	const header = { FIRSTX: 1000, LASTX: 1002, NPOINTS: 3 }
	const exponent = importSpectrum(jcamp(['1000 1.5E+01 2E-01 3'], header))
	const sqz = importSpectrum(jcamp(['1000E1e2E'], header))
	if (!exponent.ok || !sqz.ok) throw new Error('refused')
	expect(Array.from(exponent.value.spectrum.y)).toEqual([15, 0.2, 3])
	expect(Array.from(sqz.value.spectrum.y)).toEqual([51, -52, 5])
})

test('SOURCES.md polystyrene (digilab3240 FIX vs DIFDUP): the DIFDUP file decodes to the same integers; only its YFACTOR differs', () => {
	// SOURCES.md: "the YFACTOR is written 2.3884185791e-09 where the FIX file has 2.384185791e-09, so the decoded
	// y values are 0.18 % higher". Identical integers make the ratio of every point exactly that ratio.
	const fix = load('polystyrene/ps_film_digilab3240_4cm_FIX.jdx')
	const difdup = load('polystyrene/ps_film_digilab3240_4cm_DIFDUP.jdx')
	const expected = 2.3884185791 / 2.384185791
	const tf = transmittance(fix)
	const td = transmittance(difdup)
	const worst = Math.max(...td.map((t, i) => Math.abs(t / tf[i]! - expected)))
	expect(worst).toBeLessThan(1e-12)
	// LASTX is written 4002.284 in one file and 4.00228378e+03 in the other: the grids agree to 0.001 cm⁻¹.
	expect(Math.max(...Array.from(difdup.x, (x, i) => Math.abs(x - fix.x[i]!)))).toBeLessThan(0.001)
})

test('SOURCES.md compounds (indene FIX absorbance vs XY transmittance): the same measurement, point for point', () => {
	// SOURCES.md: "Same measurement as the next two files, in three encodings". Both files have YFACTOR 1e-4 and
	// the FIX file stops at absorbance 3.0 (T = 0.001), so |ΔT| ≤ 0.001 overall and far less where A < 2.
	const fix = load('compounds/indene_FIX_absorbance.jdx')
	const xy = load('compounds/indene_XY_transmittance.jdx')
	expect(Array.from(fix.x)).toEqual(Array.from(xy.x))
	const tf = transmittance(fix)
	const tx = transmittance(xy)
	let worst = 0
	let worstBelow2 = 0
	for (let i = 0; i < tf.length; i++) {
		const d = Math.abs(tf[i]! - tx[i]!)
		worst = Math.max(worst, d)
		if (fix.y[i]! < 2) worstBelow2 = Math.max(worstBelow2, d)
	}
	expect(worst).toBeLessThanOrEqual(0.001)
	expect(worstBelow2).toBeLessThan(2e-4)
})

test('SOURCES.md compounds (indene DIFDUP): the interpolated 0.964 cm⁻¹ grid follows the 1 cm⁻¹ XY file', () => {
	// SOURCES.md: "Δ 0.96427 (laser-defined spacing, interpolated)". Linear interpolation of the XY file at the
	// DIFDUP abscissae agrees to within 0.01 in T (from memory: interpolation error of 2 cm⁻¹ bands at 1 cm⁻¹ steps).
	const difdup = load('compounds/indene_DIFDUP_transmittance.jdx')
	const xy = load('compounds/indene_XY_transmittance.jdx')
	const tx = transmittance(xy)
	let worst = 0
	for (let i = 0; i < difdup.x.length; i++) {
		const x = difdup.x[i]!
		const j = Math.min(Math.floor(x - 400), tx.length - 2)
		const w = x - xy.x[j]!
		const interpolated = tx[j]! * (1 - w) + tx[j + 1]! * w
		worst = Math.max(worst, Math.abs(10 ** -difdup.y[i]! - interpolated))
	}
	expect(worst).toBeLessThan(0.01)
})

test('SOURCES.md compounds (4-chloroaniline pair): different compression and a descending axis, correlation 1.000', () => {
	// SOURCES.md: "the same measurement as the file above (correlation 1.000)", "DIF+DUP and a descending axis".
	// The two files are scaled differently in absorbance; the correlation of the absorbances is 1.000.
	const dif = load('compounds/4_chloroaniline_solid_pe1000.jdx')
	const difdup = load('compounds/4_chloroaniline_solid_pe1000_single.jdx')
	expect(difdup.x.length).toBe(dif.x.length)
	expect(Math.max(...Array.from(dif.x, (x, i) => Math.abs(x - difdup.x[i]!)))).toBeLessThan(0.01)
	expect(pearson(dif.y, difdup.y)).toBeGreaterThan(0.9995)
})

test('SOURCES.md format (LINK files): the IR blocks cut from LINK files equal the single-block files', () => {
	// SOURCES.md: acetophenone "IR block cut from jsv/data/acetophenone.jdx"; nested LINK "Its IR blocks are the
	// same data as the chloroaniline files in compounds/".
	const pairs: Array<[string, string]> = [
		['compounds/acetophenone_pe1000.jdx', 'format/link_acetophenone_ir_nmr_ms.jdx'],
		['compounds/4_chloroaniline_solid_pe1000.jdx', 'format/link_nested_chloroanilines_ir_nmr.jdx'],
	]
	for (const [single, link] of pairs) {
		const a = load(single)
		const b = load(link)
		expect(Array.from(b.y)).toEqual(Array.from(a.y))
		expect(Array.from(b.x)).toEqual(Array.from(a.x))
	}
})

test('SOURCES.md format/derived: the semicolon/decimal-comma CSV and the tab XY file hold the pe1600 DIFDUP spectrum', () => {
	// SOURCES.md: both are "ps_film_pe1600_2cm_DIFDUP.jdx decoded" and written as %T (2 decimals) and as a fraction.
	const difdup = transmittance(load('polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx'))
	for (const file of [
		'format/derived/ps_film_pe1600_semicolon_decimal_comma.csv',
		'format/derived/ps_film_pe1600_tab_no_header.xy',
	]) {
		const t = transmittance(load(file))
		expect(Math.max(...t.map((v, i) => Math.abs(v - difdup[i]!)))).toBeLessThan(1e-6)
	}
})

test('SOURCES.md format/derived (XYPOINTS in MICROMETERS): x = 10000/wavenumber recovers the FIX spectrum', () => {
	// SOURCES.md: "x = 10000/wavenumber, sorted ascending in µm … y unchanged"; written with 6 decimals, so
	// |Δx| ≤ ν̃²/10⁴ × 5e-7 ≈ 0.0008 cm⁻¹ at 4000 cm⁻¹ and |ΔT| ≤ 5e-7.
	const fix = load('polystyrene/ps_film_digilab3240_4cm_FIX.jdx')
	const points = load('format/derived/ps_film_XYPOINTS_MICROMETERS.jdx')
	expect(points.x.length).toBe(fix.x.length)
	const tf = transmittance(fix)
	const tp = transmittance(points)
	expect(Math.max(...Array.from(points.x, (x, i) => Math.abs(x - fix.x[i]!)))).toBeLessThan(0.001)
	expect(Math.max(...tp.map((v, i) => Math.abs(v - tf[i]!)))).toBeLessThan(6e-7)
})
