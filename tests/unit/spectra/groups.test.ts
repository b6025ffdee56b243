import { expect, test } from 'vitest'

import { GROUP_FREQUENCIES } from '#shared/spectra/group-frequencies.ts'
import { type GroupAnalysis, type GroupId, GROUPS_CAVEAT, suggestGroups } from '#shared/spectra/groups.ts'
import { loadReference } from '#tests/unit/spectra/load-reference.ts'
import { type SyntheticBand, synthesise } from '#tests/unit/spectra/synthetic.ts'

function analyse(relPath: string): GroupAnalysis {
	const spectrum = loadReference(relPath)
	return suggestGroups(spectrum, {
		range: { from: Math.max(600, spectrum.x[0]!), to: Math.min(4000, spectrum.x[spectrum.x.length - 1]!) },
	})
}
const ids = (analysis: GroupAnalysis) => analysis.suggestions.map((s) => s.id)
const find = (analysis: GroupAnalysis, id: GroupId) => analysis.suggestions.find((s) => s.id === id)
const CARBONYL_FAMILY: Array<GroupId> = [
	'carbonyl',
	'ketone',
	'conjugated-ketone',
	'aldehyde',
	'ester',
	'carboxylic-acid',
	'amide',
]

test('every correlation-table row names its FACTS.md section and published sources', () => {
	for (const row of GROUP_FREQUENCIES) {
		expect(row.from).toBeLessThan(row.to)
		expect(row.cited.length).toBeGreaterThan(0)
		if (row.evidence !== 'MEMORY') {
			expect(row.sources.length).toBeGreaterThan(0)
			expect(row.facts).toMatch(/^§6\.\d$/)
		}
	}
})

// ---- real spectra (SOURCES.md compound rows); group positions from FACTS.md §6 ----

test('[GRP-001] cyclohexanone: a saturated ketone near 1712 cm⁻¹', () => {
	// SOURCES.md: cyclohexanone_film.jdx "aliphatic ketone, C=O 1712". Ketone 1725–1705: FACTS.md §6.4 (NIU, OWL [READ]).
	const analysis = analyse('compounds/cyclohexanone_film.jdx')
	const ketone = find(analysis, 'ketone')
	expect(ketone).toBeDefined()
	expect(Math.abs(ketone!.evidence[0]!.position - 1712)).toBeLessThan(4)
	expect(ids(analysis)).not.toContain('conjugated-ketone')
	// Its C=O overtone near 3400 must not be read as an N–H or O–H.
	expect(ids(analysis)).not.toContain('primary-amine')
	expect(ids(analysis)).not.toContain('amide')
	expect(ids(analysis)).toContain('sp3-ch')
})

test('[GRP-002] acetophenone: a conjugated aryl ketone, C=O lowered by tens of cm⁻¹', () => {
	// SOURCES.md: acetophenone_pe1000.jdx "aryl ketone, C=O 1679"; conjugated ketones 1700–1640 (EPST), α,β-unsaturated
	// ≈ −35 cm⁻¹ (W): FACTS.md §6.4.
	const analysis = analyse('compounds/acetophenone_pe1000.jdx')
	const ketone = find(analysis, 'conjugated-ketone')
	expect(ketone).toBeDefined()
	expect(ketone!.name).toContain('aryl')
	const carbonyl = ketone!.evidence.find((e) => e.role === 'C=O stretch')!
	expect(Math.abs(carbonyl.position - 1679)).toBeLessThan(4)
	expect(ketone!.note).toMatch(/about 3\d cm⁻¹ below/)
	expect(ids(analysis)).toContain('aromatic')
	expect(ids(analysis)).not.toContain('ketone')
})

test('[GRP-003] isobutyl acrylate: an ester, C=O with both C–O stretches', () => {
	// SOURCES.md: isobutyl_acrylate_pe1800_PAC.jdx "an ester (acrylate C=O about 1747, C=C 1640/1631)";
	// ester C=O 1750–1735 and C–O 1300–1000: FACTS.md §6.4, §6.5 [READ].
	const analysis = analyse('compounds/isobutyl_acrylate_pe1800_PAC.jdx')
	const ester = find(analysis, 'ester')
	expect(ester).toMatchObject({ confidence: 'high' })
	expect(Math.abs(ester!.evidence[0]!.position - 1747)).toBeLessThan(4)
	expect(ester!.evidence.map((e) => e.row)).toEqual(expect.arrayContaining(['co-ester-coc', 'co-ester-oc']))
})

test('[GRP-004] fat spread: a triglyceride ester near 1745 cm⁻¹ with long CH₂ chains', () => {
	// SOURCES.md: fat_spread_smart_balance_nicolet.jdx "triglyceride ester, C=O about 1745"; –(CH₂)n– rock 725–720
	// (TCA/EPST, FACTS.md §6.6).
	const analysis = analyse('compounds/fat_spread_smart_balance_nicolet.jdx')
	const ester = find(analysis, 'ester')
	expect(ester).toMatchObject({ confidence: 'high' })
	expect(Math.abs(ester!.evidence[0]!.position - 1745)).toBeLessThan(4)
})

test('[GRP-005] isopropanol: broad H-bonded O–H about 3340 with a C–O stretch', () => {
	// SOURCES.md: isopropanol_atr_znse_nrcan.csv "secondary alcohol, broad O–H about 3340"; O–H H-bonded 3500–3200
	// (s, b) and alcohol C–O 1150–1030: FACTS.md §6.2, §6.5 [READ].
	const analysis = analyse('compounds/isopropanol_atr_znse_nrcan.csv')
	const alcohol = find(analysis, 'alcohol')
	expect(alcohol).toMatchObject({ confidence: 'high' })
	const oh = alcohol!.evidence[0]!
	expect(Math.abs(oh.position - 3340)).toBeLessThan(30)
	expect(oh.width).toBeGreaterThan(100)
	for (const id of CARBONYL_FAMILY) expect(ids(analysis)).not.toContain(id)
	// Isopropyl: the split methyl bend (gem-dimethyl, EPST 1389–1381 / 1372–1368, FACTS.md §6.6).
	expect(find(analysis, 'methyl')!.note).toContain('gem-dimethyl')
})

for (const [file, pair] of [
	['4_chloroaniline_solid_pe1000.jdx', [3474, 3383]],
	['3_chloroaniline_pe1000.jdx', null],
	['2_chloroaniline_pe1000.jdx', null],
] as const) {
	test(`[GRP-006] ${file}: a primary aromatic amine (N–H pair)`, () => {
		// SOURCES.md: 4-chloroaniline "primary aromatic amine, NH2 3474/3383"; two N–H bands for primary amines
		// [MEMORY, W] and N–H stretch 3550–3060 (NIU [READ]): FACTS.md §6.2.
		const analysis = analyse(`compounds/${file}`)
		const amine = find(analysis, 'primary-amine')
		expect(amine).toBeDefined()
		expect(amine!.name).toBe('Primary aromatic amine')
		const [asym, sym] = amine!.evidence
		expect(asym!.position - sym!.position).toBeGreaterThan(50)
		expect(asym!.position - sym!.position).toBeLessThan(120)
		if (pair) {
			expect(Math.abs(asym!.position - pair[0])).toBeLessThan(3)
			expect(Math.abs(sym!.position - pair[1])).toBeLessThan(3)
		}
		expect(ids(analysis)).toContain('aromatic')
		expect(ids(analysis)).not.toContain('alcohol')
	})
}

test('[GRP-007] acetanilide (chart scan): an amide — C=O with an N–H and the amide II band', () => {
	// SOURCES.md: acetanilide_scan.jdx "secondary amide", digitised from a chart ("lower fidelity"); its C=O reads near
	// 1726, above the amide I range 1690–1630 (EPST, FACTS.md §6.4), so the suggestion is medium, not high.
	const analysis = analyse('compounds/acetanilide_scan.jdx')
	const amide = find(analysis, 'amide')
	expect(amide).toBeDefined()
	expect(amide!.name).toBe('Amide (secondary)')
	expect(amide!.evidence.map((e) => e.role)).toEqual(
		expect.arrayContaining(['N–H stretch', 'amide II (N–H bend + C–N)']),
	)
	expect(ids(analysis)).toContain('aromatic')
	// An ester reading of the same C=O is demoted because of the N–H.
	const ester = find(analysis, 'ester')
	if (ester) expect(ester.confidence).toBe('low')
})

for (const file of ['ethylbenzene_pe1000.jdx', 'toluene_atr_znse_nrcan.csv']) {
	test(`[GRP-008] ${file}: aromatic ring pair, sp² C–H above and sp³ C–H below 3000 cm⁻¹`, () => {
		// Ring C–C ≈1600/≈1500, aromatic =C–H 3100–3000, sp³ C–H 3000–2850: FACTS.md §6.2, §6.5 [READ].
		const analysis = analyse(`compounds/${file}`)
		expect(find(analysis, 'aromatic')).toMatchObject({ confidence: 'high' })
		const sp2 = find(analysis, 'sp2-ch')!
		expect(sp2.evidence[0]!.position).toBeGreaterThan(3000)
		const sp3 = find(analysis, 'sp3-ch')!
		for (const e of sp3.evidence) expect(e.position).toBeLessThan(3000)
		for (const id of CARBONYL_FAMILY) expect(ids(analysis)).not.toContain(id)
	})
}

for (const file of ['n_hexane_pe1000.jdx', 'heptanes_atr_znse_nrcan.csv']) {
	test(`[GRP-009] ${file}: an alkane, and no carbonyl, O–H or N–H is claimed`, () => {
		// SOURCES.md: n-hexane (alkane); "Heptanes" (alkane). CH₃ bend ≈1380 (NIU/EPST/W) and –(CH₂)n– rock
		// 725–720 (EPST/TCA): FACTS.md §6.6.
		const analysis = analyse(`compounds/${file}`)
		expect(find(analysis, 'alkane')).toMatchObject({ confidence: 'high' })
		expect(find(analysis, 'methyl')).toBeDefined()
		for (const id of [
			...CARBONYL_FAMILY,
			'alcohol',
			'primary-amine',
			'aromatic',
			'sp2-ch',
			'sp-ch',
			'terminal-alkyne',
			'nitrile',
			'alkene',
		] as Array<GroupId>) {
			expect(ids(analysis)).not.toContain(id)
		}
		expect(find(analysis, 'alkane')!.evidence.some((e) => e.row === 'ch2-rock')).toBe(true)
	})
}

test('every suggestion carries evidence, a confidence and its sources; the caveat travels with them', () => {
	const analysis = analyse('compounds/ethylbenzene_pe1000.jdx')
	expect(analysis.caveat).toBe(GROUPS_CAVEAT)
	for (const s of analysis.suggestions) {
		expect(s.evidence.length).toBeGreaterThan(0)
		expect(['high', 'medium', 'low']).toContain(s.confidence)
		expect(s.sources.length).toBeGreaterThan(0)
	}
	expect(analysis.peaks.find((p) => Math.abs(p.position - 1496) < 3)!.candidates.map((c) => c.row)).toContain(
		'ring-1500',
	)
})

// ---- synthesised spectra: the reference set has no real spectrum of these groups ----

const alkylChain: Array<SyntheticBand> = [
	// sp³ C–H: CH₃ 2960/2870, CH₂ 2925 (W, FACTS.md §6.2); CH₂ 1465 (NIU), CH₃ 1380 (W) (§6.6).
	{ position: 2960, height: 0.6, fwhm: 15 },
	{ position: 2925, height: 0.5, fwhm: 15 },
	{ position: 2870, height: 0.35, fwhm: 12 },
	{ position: 1465, height: 0.3, fwhm: 12 },
	{ position: 1380, height: 0.2, fwhm: 8 },
]

test('[GRP-010] synthesised aldehyde: C=O with the C–H Fermi doublet', () => {
	// Synthesised from published positions (no real aldehyde in the reference set): C=O 1730 (TCA/NIU 1740–1720),
	// C–H doublet 2820 and 2720 (W), FACTS.md §6.2, §6.4.
	const spectrum = synthesise([
		...alkylChain,
		{ position: 1730, height: 1, fwhm: 18 },
		{ position: 2820, height: 0.15, fwhm: 14 },
		{ position: 2720, height: 0.12, fwhm: 14 },
	])
	const analysis = suggestGroups(spectrum)
	const aldehyde = find(analysis, 'aldehyde')
	expect(aldehyde).toMatchObject({ confidence: 'high' })
	expect(aldehyde!.evidence.map((e) => Math.round(e.position))).toEqual([1730, 2720, 2820])
	expect(ids(analysis)).not.toContain('ketone')
	expect(ids(analysis)).not.toContain('ester')
})

test('[GRP-011] synthesised carboxylic acid: very broad O–H 3300–2500 with C=O; an alcohol is not claimed', () => {
	// Synthesised from published positions (no real acid in the set): O–H 3300–2500 very broad (TCA/OWL), C=O 1710 (W),
	// O–H out-of-plane 950–910 (TCA), C–O in 1320–1000 (TCA): FACTS.md §6.2, §6.4, §6.5, §6.6.
	const spectrum = synthesise([
		...alkylChain,
		{ position: 3000, height: 0.35, fwhm: 700, eta: 0.3 },
		{ position: 1710, height: 1, fwhm: 25 },
		{ position: 1290, height: 0.5, fwhm: 30 },
		{ position: 935, height: 0.25, fwhm: 35 },
	])
	const analysis = suggestGroups(spectrum)
	expect(find(analysis, 'carboxylic-acid')).toMatchObject({ confidence: 'high' })
	expect(ids(analysis)).not.toContain('alcohol')
	expect(ids(analysis)).not.toContain('ketone')
	// The same spectrum without the broad O–H reads as a ketone instead.
	const noOH = suggestGroups(
		synthesise([
			...alkylChain,
			{ position: 1710, height: 1, fwhm: 25 },
			{ position: 1290, height: 0.5, fwhm: 30 },
			{ position: 935, height: 0.25, fwhm: 35 },
		]),
	)
	expect(ids(noOH)).not.toContain('carboxylic-acid')
	expect(ids(noOH)).toContain('ketone')
})

test('[GRP-012] synthesised nitrile: a sharp C≡N near 2250', () => {
	// Synthesised from published positions (no real nitrile in the set): C≡N 2260–2240 (NIU), FACTS.md §6.3.
	const spectrum = synthesise([...alkylChain, { position: 2250, height: 0.3, fwhm: 10 }])
	const analysis = suggestGroups(spectrum)
	const nitrile = find(analysis, 'nitrile')
	expect(nitrile).toMatchObject({ confidence: 'high' })
	expect(nitrile!.evidence[0]!.position).toBeCloseTo(2250, 0)
	expect(ids(analysis)).not.toContain('alkane')
})

test('[GRP-013] synthesised terminal alkyne: sharp ≡C–H near 3300 with C≡C near 2120', () => {
	// Synthesised from published positions (no real alkyne in the set): ≡C–H 3330–3270 sharp (TCA), C≡C terminal
	// 2100–2140 (W), ≡C–H bend 700–610 (TCA): FACTS.md §6.2, §6.3, §6.6.
	const spectrum = synthesise([
		...alkylChain,
		{ position: 3310, height: 0.7, fwhm: 15 },
		{ position: 2120, height: 0.1, fwhm: 12 },
		{ position: 630, height: 0.6, fwhm: 30 },
	])
	const analysis = suggestGroups(spectrum)
	expect(find(analysis, 'terminal-alkyne')).toMatchObject({ confidence: 'high' })
	expect(find(analysis, 'sp-ch')).toBeDefined()
	expect(ids(analysis)).not.toContain('alcohol')
	expect(ids(analysis)).not.toContain('primary-amine')
})

test('[GRP-014] conjugation: the same ketone at 1715 reads saturated, at 1685 with a ring reads conjugated', () => {
	// Saturated ketone 1715 (TCA); α,β-unsaturated/aryl 1685, about −35 (W); ring pair 1600/1500 (TCA/OWL):
	// FACTS.md §6.4, §6.5. Synthesised spectra.
	const ring: Array<SyntheticBand> = [
		{ position: 1600, height: 0.3, fwhm: 8 },
		{ position: 1495, height: 0.25, fwhm: 8 },
		{ position: 3060, height: 0.1, fwhm: 10 },
		{ position: 750, height: 0.6, fwhm: 10 },
	]
	const saturated = suggestGroups(synthesise([...alkylChain, { position: 1715, height: 1, fwhm: 18 }]))
	expect(ids(saturated)).toContain('ketone')
	const conjugated = suggestGroups(synthesise([...alkylChain, ...ring, { position: 1685, height: 1, fwhm: 18 }]))
	const suggestion = find(conjugated, 'conjugated-ketone')!
	expect(suggestion.note).toContain('about 30 cm⁻¹ below')
	expect(ids(conjugated)).toContain('aromatic')
})
