/**
 * XY text files, byte-level refusals (empty, binary, oversized, encodings) and the JCAMP-DX constructs that the
 * reference set lacks (PEAK TABLE, NTUPLES, DUP bombs, header/data disagreement), on small inline files.
 */
import { expect, test } from 'vitest'
import { encodeJcamp } from '#shared/spectra/encode-jcamp.ts'
import { importSpectrum } from '#shared/spectra/import.ts'

function bytes(text: string): Uint8Array {
	return new TextEncoder().encode(text)
}

function refusal(input: Uint8Array | string, options = {}) {
	const result = importSpectrum(typeof input === 'string' ? bytes(input) : input, options)
	if (result.ok) throw new Error('accepted')
	return result.error
}

function accepted(input: Uint8Array | string) {
	const result = importSpectrum(typeof input === 'string' ? bytes(input) : input)
	if (!result.ok) throw new Error(result.error.message)
	return result.value
}

const ABSORBANCE_CSV = 'wavenumber,absorbance\n4000,0.01\n3000,0.5\n2000,0.02\n1000,0.9\n500,0.03\n'

test('common practice, no source: a CSV with a header reads absorbance on an ascending axis whatever the file order', () => {
	const value = accepted(ABSORBANCE_CSV)
	expect(Array.from(value.spectrum.x)).toEqual([500, 1000, 2000, 3000, 4000])
	expect(Array.from(value.spectrum.y)).toEqual([0.03, 0.9, 0.02, 0.5, 0.01])
	expect(value.metadata).toMatchObject({
		format: 'XY text',
		ordinate: 'absorbance',
		firstX: 4000,
		lastX: 500,
		points: 5,
	})
	expect(value.warnings).toEqual([])
})

test('common practice, no source: semicolons with decimal commas, tabs, and blanks with scientific notation', () => {
	const semicolon = accepted('Wavenumber (cm-1);%T\r\n4000,5;90,5\r\n3000,5;10,0\r\n2000,5;100\r\n')
	expect(Array.from(semicolon.spectrum.x)).toEqual([2000.5, 3000.5, 4000.5])
	expect(semicolon.metadata.ordinate).toBe('transmittance-percent')
	expect(semicolon.spectrum.y[1]).toBeCloseTo(1, 12) // 10 %T → A = 1
	const tab = accepted('1000\t1.0E-01\n2000\t2.5e-1\n3000\t1e-2\n4000\t0.02\n')
	expect(tab.metadata.dataForm).toBe('tab')
	const blanks = accepted('  1000   0,1\n  2000   0,25\n  3000   0,01\n  4000   0,02\n')
	expect(blanks.metadata.dataForm).toBe('whitespace, decimal comma')
	expect(Array.from(blanks.spectrum.y)).toEqual([0.1, 0.25, 0.01, 0.02])
})

test('common practice, no source: without a header, transmittance is recognised by its bands pointing down, with a warning', () => {
	const value = accepted('4000 0.95\n3000 0.96\n2900 0.2\n2000 0.94\n1600 0.3\n1000 0.95\n500 0.93\n')
	expect(value.metadata.ordinate).toBe('transmittance-fraction')
	expect(value.warnings.map((w) => w.code)).toEqual(['ordinate-guessed'])
	expect(value.spectrum.y[value.spectrum.x.indexOf(2900)]).toBeCloseTo(-Math.log10(0.2), 12)
})

test('common practice, no source: abscissae below 100 without a header are read as micrometres, with a warning', () => {
	const value = accepted('2.5 0.1\n5 0.2\n10 0.05\n20 0.3\n')
	expect(Array.from(value.spectrum.x)).toEqual([500, 1000, 2000, 4000])
	expect(value.warnings.map((w) => w.code)).toContain('x-unit-guessed')
})

test('text refusals name the line: NaN, words in the data, repeated or unordered abscissae, too few points, no mid-IR', () => {
	expect(refusal('x,y\n1000,0.1\n1001,NaN\n1002,0.3\n')).toMatchObject({ code: 'nan', line: 3 })
	expect(refusal('x,y\n1000,0.1\n1001,0.2\n1002,abc\n')).toMatchObject({ code: 'bad-number', line: 4 })
	expect(refusal('x,y\n1000,0.1\n1001,0.2\n1001,0.3\n').code).toBe('x-order')
	expect(refusal('x,y\n1000,0.1\n1002,0.2\n1001,0.3\n').code).toBe('x-order')
	expect(refusal('x,y\n1000,0.1\n').code).toBe('no-data')
	expect(refusal('wavenumber,absorbance\n10000,0.1\n12000,0.2\n14000,0.3\n').code).toBe('not-infrared')
	expect(refusal('just some words\nand more words\n').code).toBe('no-data')
	expect(refusal('wavenumber,reflectance\n1000,0.1\n2000,0.2\n').code).toBe('units')
	expect(refusal('x,y\n-5,0.1\n0,0.2\n5,0.1\n').code).toBe('units')
})

test('bytes: empty, blank, binary, oversized (configurable) and a DUP expansion bomb are refused', () => {
	expect(refusal(new Uint8Array(0)).code).toBe('empty')
	expect(refusal('  \n\t\n').code).toBe('empty')
	expect(refusal(Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13])).code).toBe('binary')
	const big = refusal(ABSORBANCE_CSV, { maxBytes: 20 })
	expect(big.code).toBe('too-large')
	expect(big.status).toBe(413)
	const bomb =
		'##TITLE= bomb\n##JCAMP-DX= 4.24\n##DATA TYPE= INFRARED SPECTRUM\n##XUNITS= 1/CM\n##YUNITS= ABSORBANCE\n##XYDATA= (X++(Y..Y))\n1000 1s99999999\n##END=\n'
	expect(refusal(bomb)).toMatchObject({ code: 'too-large', line: 7 })
})

test('encodings: UTF-16BE with BOM, UTF-16LE without BOM, UTF-8 with BOM and Latin-1 bytes all read the same numbers', () => {
	const text = 'wavenumber (cm-1),absorbance µ\n1000,0.1\n2000,0.2\n3000,0.15\n'
	const reference = accepted(text.replace(' µ', ''))
	const utf16le = new Uint8Array(text.length * 2)
	const utf16be = new Uint8Array(text.length * 2 + 2)
	utf16be[0] = 0xfe
	utf16be[1] = 0xff
	for (let i = 0; i < text.length; i++) {
		utf16le[2 * i] = text.charCodeAt(i) & 0xff
		utf16le[2 * i + 1] = text.charCodeAt(i) >> 8
		utf16be[2 + 2 * i] = text.charCodeAt(i) >> 8
		utf16be[3 + 2 * i] = text.charCodeAt(i) & 0xff
	}
	const latin1 = Uint8Array.from(text, (c) => c.charCodeAt(0))
	const utf8bom = Uint8Array.from([0xef, 0xbb, 0xbf, ...bytes(text)])
	const cases: Array<[Uint8Array, string]> = [
		[utf16le, 'utf-16le'],
		[utf16be, 'utf-16be'],
		[latin1, 'windows-1252'],
		[utf8bom, 'utf-8'],
	]
	for (const [input, encoding] of cases) {
		const value = accepted(input)
		expect(value.metadata.sourceEncoding).toBe(encoding)
		expect(Array.from(value.spectrum.y)).toEqual(Array.from(reference.spectrum.y))
	}
})

test('JCAMP-DX 4.24 (McDonald & Wilks 1988): a PEAK TABLE (XY..XY) is read, sorted, and flagged as not a full spectrum', () => {
	const text = [
		'##TITLE= peaks',
		'##JCAMP-DX= 4.24',
		'##DATA TYPE= INFRARED PEAK TABLE',
		'##XUNITS= 1/CM',
		'##YUNITS= ABSORBANCE',
		'##NPOINTS= 3',
		'##PEAK TABLE= (XY..XY)',
		'1601.4, 0.8; 3026.3, 0.5',
		'1028.3, 0.4',
		'##END=',
	].join('\n')
	const value = accepted(text)
	expect(Array.from(value.spectrum.x)).toEqual([1028.3, 1601.4, 3026.3])
	expect(Array.from(value.spectrum.y)).toEqual([0.4, 0.8, 0.5])
	expect(value.metadata.dataForm).toBe('PEAK TABLE')
	expect(value.warnings.map((w) => w.code)).toEqual(expect.arrayContaining(['peak-table', 'sorted']))
})

test('JCAMP-DX 5.01 (Lampen et al. 1999): NTUPLES tables are refused as unsupported; a LINK without IR blocks as not-infrared', () => {
	const ntuples =
		'##TITLE= n\n##JCAMP-DX= 5.01\n##DATA TYPE= INFRARED SPECTRUM\n##XUNITS= 1/CM\n##YUNITS= ABSORBANCE\n##NTUPLES= INFRARED SPECTRUM\n##VAR_NAME= WAVENUMBER, ABSORBANCE\n##PAGE= 1\n##DATA TABLE= (X++(Y..Y)), XYDATA\n1000 1 2 3\n##END NTUPLES= INFRARED SPECTRUM\n##END=\n'
	expect(refusal(ntuples).code).toBe('unsupported')
	const link =
		'##TITLE= l\n##JCAMP-DX= 5.01\n##DATA TYPE= LINK\n##BLOCKS= 1\n##TITLE= nmr\n##JCAMP-DX= 5.01\n##DATA TYPE= NMR SPECTRUM\n##XUNITS= HZ\n##YUNITS= ARBITRARY UNITS\n##XYDATA= (X++(Y..Y))\n1 2 3\n##END=\n##END=\n'
	expect(refusal(link)).toMatchObject({ code: 'not-infrared', line: 7 })
})

test('JCAMP-DX 4.24: a repeated XFACTOR with another value is refused; an ordinate lost from a line is found by the line abscissae', () => {
	const good = encodeJcamp({
		title: 'x',
		firstX: 1000.123,
		lastX: 1000.123 + 99 * 0.7,
		ordinates: Array.from({ length: 100 }, (_, i) => 1000 + ((i * 37) % 101)),
		yFactor: 1e-3,
		form: 'AFFN',
		maxLineLength: 40,
	})
	expect(accepted(good).metadata.points).toBe(100)
	const repeated = good.replace('##XFACTOR= 1\n', '##XFACTOR= 1\n##XFACTOR= 2\n')
	expect(refusal(repeated).code).toBe('repeated-label')
	// Remove the last ordinate of the third data line and add one at the end of the fourth: NPOINTS still match.
	const lines = good.split('\n')
	const first = lines.findIndex((l) => l.startsWith('##XYDATA')) + 1
	lines[first + 2] = lines[first + 2]!.replace(/ \d+$/, '')
	lines[first + 3] = `${lines[first + 3]} 1000`
	expect(refusal(lines.join('\n'))).toMatchObject({ code: 'xcheck', line: first + 4 })
})

test('JCAMP-DX 4.24: LASTX that disagrees with the data is refused naming the label (FACTS.md §4.4(c): flag header/data inconsistency)', () => {
	const text = encodeJcamp({
		title: 'x',
		firstX: 2373.973,
		lastX: 1811.818,
		ordinates: Array.from({ length: 584 }, (_, i) => i % 17),
		yFactor: 1,
		form: 'DIFDUP',
	})
	expect(accepted(text).metadata.points).toBe(584)
	// FACTS.md §4.4(c): header LASTX = 1804.104 where the data give 1811.818.
	const error = refusal(text.replace('##LASTX= 1811.818', '##LASTX= 1804.104'))
	expect(error.code).toBe('lastx')
	expect(error.message).toContain('##LASTX= 1804.104')
})
