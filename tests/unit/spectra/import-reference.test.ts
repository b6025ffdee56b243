/**
 * Every real file in the shared reference set either imports with the points and range that SOURCES.md states,
 * or is refused with the right typed error. Each row names its source: the SOURCES.md row of that file.
 */
import { readdirSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { expect, test } from 'vitest'
import { importSpectrum } from '#shared/spectra/import.ts'
import type { OrdinateKind } from '#shared/spectra/types.ts'
import { readReferenceFile, referenceSpectraDir } from '#tests/support/reference-spectra.ts'

type Expected = {
	file: string
	points: number
	/** Range in cm⁻¹ as SOURCES.md states it (rounded there to 0.1 cm⁻¹ or to whole numbers). */
	low: number
	high: number
	ordinate: OrdinateKind
	/** Warning codes that must be present (caveats of SOURCES.md that the importer reports). */
	warnings?: Array<string>
	title?: string
}

// Source for every row: SOURCES.md, the row of the same file name (columns "Units" and "Points, range").
const IMPORTS: Array<Expected> = [
	// SOURCES.md polystyrene/ rows
	{
		file: 'polystyrene/ps_film_digilab3240_4cm_FIX.jdx',
		points: 1844,
		low: 447.5,
		high: 4002.3,
		ordinate: 'transmittance-fraction',
	},
	// SOURCES.md: "the YFACTOR is written 2.3884185791e-09 where the FIX file has 2.384185791e-09" → FIRSTY warning
	{
		file: 'polystyrene/ps_film_digilab3240_4cm_DIFDUP.jdx',
		points: 1844,
		low: 447.5,
		high: 4002.3,
		ordinate: 'transmittance-fraction',
		warnings: ['firsty'],
	},
	// SOURCES.md: "TRANSMITTANCE in %T (YFACTOR 0.01)", "4400→450"
	{
		file: 'polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx',
		points: 3951,
		low: 450,
		high: 4400,
		ordinate: 'transmittance-percent',
		warnings: ['ordinate-guessed'],
	},
	// SOURCES.md: "Ordinates run from -0.2 to 112.9 %T" → percent, negative T clipped
	{
		file: 'polystyrene/ps_film_digilab3207_2cm_FIX.jdx',
		points: 3736,
		low: 399.3,
		high: 4001.3,
		ordinate: 'transmittance-percent',
		warnings: ['transmittance-clipped'],
	},
	{ file: 'polystyrene/ps_film_atr_diamond_nrcan.csv', points: 1798, low: 650.4, high: 3999.4, ordinate: 'absorbance' },
	// SOURCES.md: "2126 pts, 4497.5→399.2, descending"
	{
		file: 'polystyrene/ps_atr_diamond_bruker_openspecy.csv',
		points: 2126,
		low: 399.2,
		high: 4497.5,
		ordinate: 'absorbance',
	},
	// SOURCES.md compounds/ rows
	{
		file: 'compounds/indene_DIFDUP_transmittance.jdx',
		points: 3734,
		low: 400.2,
		high: 3999.8,
		ordinate: 'transmittance-percent',
	},
	{ file: 'compounds/indene_FIX_absorbance.jdx', points: 3601, low: 400, high: 4000, ordinate: 'absorbance' },
	// SOURCES.md: "the line ##DataClass= ##XYDATA= puts two LDRs on one line, and the real ##XYDATA= comes later"
	{
		file: 'compounds/indene_XY_transmittance.jdx',
		points: 3601,
		low: 400,
		high: 4000,
		ordinate: 'transmittance-fraction',
		warnings: ['two-labels-on-line'],
	},
	{
		file: 'compounds/isobutyl_acrylate_pe1800_PAC.jdx',
		points: 3301,
		low: 700,
		high: 4000,
		ordinate: 'transmittance-percent',
	},
	{
		file: 'compounds/acetophenone_pe1000.jdx',
		points: 3632,
		low: 499.5,
		high: 4000.9,
		ordinate: 'transmittance-fraction',
		title: 'acetophenone',
	},
	{ file: 'compounds/ethylbenzene_pe1000.jdx', points: 8001, low: 500, high: 4500, ordinate: 'transmittance-fraction' },
	// SOURCES.md: "The ##SPECTROMETER/DATA SYSTEM LDR appears twice in the block"
	{
		file: 'compounds/n_hexane_pe1000.jdx',
		points: 6701,
		low: 650,
		high: 4000,
		ordinate: 'transmittance-fraction',
		warnings: ['repeated-label'],
	},
	{ file: 'compounds/cyclohexanone_film.jdx', points: 3512, low: 594, high: 4105, ordinate: 'transmittance-fraction' },
	{ file: 'compounds/chloroform_pe1000.jdx', points: 7701, low: 550, high: 4400, ordinate: 'transmittance-fraction' },
	{
		file: 'compounds/chloroform_d_deuterochloroform.jdx',
		points: 3881,
		low: 520,
		high: 4400,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'compounds/4_chloroaniline_solid_pe1000.jdx',
		points: 1801,
		low: 400,
		high: 4000,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'compounds/4_chloroaniline_solid_pe1000_single.jdx',
		points: 1801,
		low: 400,
		high: 4000,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'compounds/3_chloroaniline_pe1000.jdx',
		points: 7800,
		low: 500,
		high: 4399.5,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'compounds/2_chloroaniline_pe1000.jdx',
		points: 8001,
		low: 500,
		high: 4500,
		ordinate: 'transmittance-fraction',
	},
	{ file: 'compounds/ethanolamine.jdx', points: 3525, low: 599.8, high: 3998.2, ordinate: 'transmittance-fraction' },
	{
		file: 'compounds/1_vinylpyrrolidin_2_one.jdx',
		points: 1816,
		low: 499.5,
		high: 3999.8,
		ordinate: 'transmittance-fraction',
	},
	{ file: 'compounds/aniline_scan.jdx', points: 1759, low: 450, high: 3966, ordinate: 'transmittance-fraction' },
	{ file: 'compounds/acetanilide_scan.jdx', points: 1759, low: 450, high: 3966, ordinate: 'transmittance-fraction' },
	{
		file: 'compounds/cis_1_2_dichloroethylene_scan.jdx',
		points: 825,
		low: 550,
		high: 3846,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'compounds/trans_1_2_dichloroethylene_scan.jdx',
		points: 880,
		low: 450,
		high: 3966,
		ordinate: 'transmittance-fraction',
	},
	// SOURCES.md: "Absorbance is clipped at 5.0 in the strongest bands"
	{ file: 'compounds/toluene_atr_znse_nrcan.csv', points: 1798, low: 650.4, high: 3999.4, ordinate: 'absorbance' },
	{ file: 'compounds/isopropanol_atr_znse_nrcan.csv', points: 1798, low: 650.4, high: 3999.4, ordinate: 'absorbance' },
	{ file: 'compounds/heptanes_atr_znse_nrcan.csv', points: 1798, low: 650.4, high: 3999.4, ordinate: 'absorbance' },
	{
		file: 'compounds/fat_spread_smart_balance_nicolet.jdx',
		points: 1868,
		low: 399.2,
		high: 3999.8,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'compounds/unil_tablet_0140_1a_absorbance.jdx',
		points: 6950,
		low: 649.9,
		high: 4000.1,
		ordinate: 'absorbance',
	},
	{
		file: 'compounds/unil_tablet_0140_1b_absorbance.jdx',
		points: 6950,
		low: 649.9,
		high: 4000.1,
		ordinate: 'absorbance',
	},
	{
		file: 'compounds/unil_tablet_0189_1a_absorbance.jdx',
		points: 6950,
		low: 649.9,
		high: 4000.1,
		ordinate: 'absorbance',
	},
	{
		file: 'compounds/unil_tablet_0189_1b_absorbance.jdx',
		points: 6950,
		low: 649.9,
		high: 4000.1,
		ordinate: 'absorbance',
	},
	{
		file: 'compounds/unil_tablet_0235_1a_absorbance.jdx',
		points: 6950,
		low: 649.9,
		high: 4000.1,
		ordinate: 'absorbance',
	},
	// SOURCES.md format/ rows
	// "BLOCKS=5, five IR blocks" → the first is taken, with a warning; "1976/3951 per block"
	{
		file: 'format/link_5_ir_blocks_pe1600.jdx',
		points: 1976,
		low: 450,
		high: 4400,
		ordinate: 'transmittance-fraction',
		warnings: ['several-blocks'],
		title: 'block 1',
	},
	// "The app should pick out the IR block and ignore the rest"; "3632 IR pts"
	{
		file: 'format/link_acetophenone_ir_nmr_ms.jdx',
		points: 3632,
		low: 499.5,
		high: 4000.9,
		ordinate: 'transmittance-fraction',
		warnings: ['other-blocks-ignored'],
	},
	// "Nested LINK (LINK inside LINK), 3 IR + 3 NMR blocks"; "Its IR blocks are the same data as the chloroaniline files"
	{
		file: 'format/link_nested_chloroanilines_ir_nmr.jdx',
		points: 1801,
		low: 400,
		high: 4000,
		ordinate: 'transmittance-fraction',
		warnings: ['several-blocks', 'other-blocks-ignored'],
		title: '4-chloroaniline',
	},
	{
		file: 'format/dif_dup_decreasing_unknown_pe1600.jdx',
		points: 3951,
		low: 450,
		high: 4400,
		ordinate: 'transmittance-fraction',
	},
	// "MINY -0.19 %T (negative transmittance)" → clipped with a warning, never NaN
	{
		file: 'format/fix_decreasing_negative_T.jdx',
		points: 3951,
		low: 450,
		high: 4400,
		ordinate: 'transmittance-percent',
		warnings: ['transmittance-clipped'],
	},
	{
		file: 'format/sqz_dup_0p5cm_18669pts.jdx',
		points: 18669,
		low: 500,
		high: 5000,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'format/pac_plus_diamond_atr_chemspectra.dx',
		points: 2559,
		low: 374,
		high: 3997,
		ordinate: 'transmittance-fraction',
		title: 'PH-771',
	},
	// "CSV without a header, scientific notation"; "absorbance-like" → guessed, with a warning
	{
		file: 'format/csv_no_header_pva_openspecy.csv',
		points: 863,
		low: 675,
		high: 3999.8,
		ordinate: 'absorbance',
		warnings: ['ordinate-guessed'],
	},
	// SOURCES.md format/derived/ rows
	{
		file: 'format/derived/ps_film_XYPOINTS_MICROMETERS.jdx',
		points: 1844,
		low: 447.5,
		high: 4002.3,
		ordinate: 'transmittance-fraction',
	},
	{
		file: 'format/derived/ps_film_pe1600_semicolon_decimal_comma.csv',
		points: 3951,
		low: 450,
		high: 4400,
		ordinate: 'transmittance-percent',
	},
	{
		file: 'format/derived/ps_film_pe1600_tab_no_header.xy',
		points: 3951,
		low: 450,
		high: 4400,
		ordinate: 'transmittance-fraction',
		warnings: ['ordinate-guessed'],
	},
	{
		file: 'format/derived/ps_film_FIX_utf16le_bom.jdx',
		points: 1844,
		low: 447.5,
		high: 4002.3,
		ordinate: 'transmittance-fraction',
	},
]

type Refusal = { file: string; code: string; line?: number; mentions: Array<string> }

// Source for every row: SOURCES.md, the row of the same file name ("Defect" / "What it exercises").
const REFUSALS: Array<Refusal> = [
	// "a non-IR DATA TYPE (mass spectrum, PEAK TABLE)"; CR-only line endings, so line 4 proves CR is a line break
	{ file: 'format/cr_line_endings_mass_spectrum.jdx', code: 'not-infrared', line: 4, mentions: ['MASS SPECTRUM'] },
	// "YUNITS Reflectance … Diffuse/hemispherical reflectance, not transmission": refused, not silently converted
	{ file: 'format/pac_plus_reflectance_nitrocellulose.jdx', code: 'units', line: 32, mentions: ['Reflectance'] },
	// malformed/ rows
	{ file: 'format/malformed/truncated_no_end.jdx', code: 'truncated', line: 105, mentions: ['##END=', '1844'] },
	// "In the 10th data line … D22709119 became D27709119": the data start on line 22, so line 31
	{ file: 'format/malformed/ycheck_mismatch.jdx', code: 'ycheck', line: 31, mentions: ['DIF check value', 'line 30'] },
	// "A ! was inserted into the 20th data line": line 41
	{ file: 'format/malformed/illegal_char_in_data.jdx', code: 'bad-character', line: 41, mentions: ['"!"'] },
	{
		file: 'format/malformed/npoints_mismatch.jdx',
		code: 'npoints',
		line: 19,
		mentions: ['##NPOINTS= 1900', '1844 points'],
	},
	{
		file: 'format/malformed/firstx_mismatch.jdx',
		code: 'firstx',
		line: 12,
		mentions: ['##FIRSTX= 547.484259', '447.48'],
	},
	{ file: 'format/malformed/no_data_table.jdx', code: 'no-data', mentions: ['##XYDATA='] },
	{ file: 'format/malformed/missing_units.jdx', code: 'units', mentions: ['##XUNITS=', '##YUNITS='] },
	{ file: 'format/malformed/empty.jdx', code: 'empty', mentions: ['empty'] },
	{ file: 'format/malformed/binary_garbage.jdx', code: 'binary', mentions: ['binary'] },
]

test.each(IMPORTS)('$file imports with the points and range SOURCES.md states', (row) => {
	const result = importSpectrum(readReferenceFile(row.file), { fileName: row.file })
	if (!result.ok) throw new Error(`${row.file} was refused: ${result.error.message}`)
	const { spectrum, metadata, warnings } = result.value
	expect(metadata.points).toBe(row.points)
	expect(spectrum.x.length).toBe(row.points)
	expect(spectrum.y.length).toBe(row.points)
	// SOURCES.md rounds ranges to 0.1 cm⁻¹, some to whole numbers: 1 cm⁻¹ covers both.
	expect(Math.abs(spectrum.x[0]! - row.low)).toBeLessThan(1)
	expect(Math.abs(spectrum.x[spectrum.x.length - 1]! - row.high)).toBeLessThan(1)
	expect(metadata.ordinate).toBe(row.ordinate)
	expect(spectrum.x.every((v, i) => i === 0 || v > spectrum.x[i - 1]!)).toBe(true)
	// Engine contract (shared/spectra/types.ts): finite absorbance; transmittance ≤ 0 is clipped, never NaN/Infinity.
	expect(spectrum.y.every((v) => Number.isFinite(v))).toBe(true)
	for (const code of row.warnings ?? []) expect(warnings.map((w) => w.code)).toContain(code)
	if (row.title !== undefined) expect(metadata.title).toBe(row.title)
})

test.each(REFUSALS)('$file is refused with code $code', (row) => {
	const result = importSpectrum(readReferenceFile(row.file), { fileName: row.file })
	if (result.ok) throw new Error(`${row.file} was accepted`)
	expect(result.error.code).toBe(row.code)
	if (row.line !== undefined) {
		expect(result.error.line).toBe(row.line)
		expect(result.error.message.startsWith(`line ${row.line}: `)).toBe(true)
	}
	for (const m of row.mentions) expect(result.error.message).toContain(m)
	// One line for a person: no stack trace, no line breaks.
	expect(result.error.message).not.toMatch(/\n|\bat .*\.ts:\d+/)
})

test('every data file of format/, compounds/ and polystyrene/ is covered by one of the tables above', () => {
	const root = referenceSpectraDir()
	const walk = (dir: string): Array<string> =>
		readdirSync(dir).flatMap((name) => {
			const path = join(dir, name)
			return statSync(path).isDirectory() ? walk(path) : [relative(root, path).split('\\').join('/')]
		})
	const onDisk = ['format', 'compounds', 'polystyrene'].flatMap((d) => walk(join(root, d))).sort()
	const covered = [...IMPORTS.map((r) => r.file), ...REFUSALS.map((r) => r.file)].sort()
	expect(covered).toEqual(onDisk)
})

test('SOURCES.md: transmittance at or below zero is clipped with a warning naming the count (fix_decreasing_negative_T, "MINY -0.19 %T")', () => {
	const result = importSpectrum(readReferenceFile('format/fix_decreasing_negative_T.jdx'))
	if (!result.ok) throw new Error(result.error.message)
	const clipped = result.value.warnings.find((w) => w.code === 'transmittance-clipped')
	expect(clipped?.message).toMatch(/^\d+ transmittance values were at or below/)
	expect(Math.max(...result.value.spectrum.y)).toBe(5)
})

test('SOURCES.md (UTF-16LE with BOM): the re-encoded FIX file gives exactly the numbers of the original', () => {
	const a = importSpectrum(readReferenceFile('polystyrene/ps_film_digilab3240_4cm_FIX.jdx'))
	const b = importSpectrum(readReferenceFile('format/derived/ps_film_FIX_utf16le_bom.jdx'))
	if (!a.ok || !b.ok) throw new Error('refused')
	expect(b.value.metadata.sourceEncoding).toBe('utf-16le')
	expect(Array.from(b.value.spectrum.y)).toEqual(Array.from(a.value.spectrum.y))
	expect(Array.from(b.value.spectrum.x)).toEqual(Array.from(a.value.spectrum.x))
})

test('SOURCES.md (pac_plus_reflectance_nitrocellulose): non-ASCII Latin-1 header bytes are tolerated up to the units decision', () => {
	// The file is refused for its reflectance units (line 32), which proves the Latin-1 lines before it were read.
	const result = importSpectrum(readReferenceFile('format/pac_plus_reflectance_nitrocellulose.jdx'))
	expect(result.ok ? null : result.error.code).toBe('units')
})
