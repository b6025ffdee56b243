/**
 * Functional-group suggestions from picked peaks, using the correlation table in group-frequencies.ts and
 * combination rules (an ester's C=O with its two C–O stretches, an aldehyde's C–H doublet with its C=O, the very
 * broad O–H of an acid with its C=O, an alcohol's broad O–H with its C–O, a primary amine's N–H pair, amide C=O
 * with N–H, conjugation lowering C=O, sp/sp²/sp³ C–H either side of 3000 cm⁻¹, the aromatic ring pair, the methyl
 * bend, nitrile and terminal alkyne). Each suggestion lists the peaks behind it and a confidence.
 *
 * These are aids for writing band tables. They never decide identity and never claim a compound.
 * Thresholds below are relative intensities (0–1, strongest band in the range = 1) chosen against the
 * intensity classes of the tables (s/vs bands must be strong, w/m bands may be weak); common practice, no source.
 * Pure and deterministic.
 */
import { type GroupFrequencyRow, groupFrequency, rowsContaining } from '#shared/spectra/group-frequencies.ts'
import { type Peak, pickPeaks } from '#shared/spectra/peaks.ts'
import { DEFAULT_EXCLUSION_REGIONS, ENGINE_VERSION, median, type Region } from '#shared/spectra/preprocess.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

export const GROUPS_ALGORITHM = 'correlation-table-combination-rules'

/** Shown with every set of suggestions (PRODUCT.md §8). */
export const GROUPS_CAVEAT =
	'Functional-group suggestions are aids for writing band tables, not conclusions: they never establish identity.'

/** A carbonyl stretch is strong in every table (s/vs, FACTS.md §6.4): at least this relative intensity. */
export const CARBONYL_MIN_RELATIVE = 0.2
/** C–O stretches are strong (s/vs, §6.5). */
export const C_O_MIN_RELATIVE = 0.2
/** The second (alkyl-side) C–O of an ester may be weaker. */
export const C_O_SECOND_MIN_RELATIVE = 0.1
/** Medium and weak bands (N–H, ring, C–H, C≡N …). */
export const MEDIUM_MIN_RELATIVE = 0.03
/** A broad band is at least this wide (FWHM, cm⁻¹) to count as a hydrogen-bonded O–H. */
export const HBONDED_OH_MIN_WIDTH = 100
/** Elevation of the 3100–3250 and 2550–2750 cm⁻¹ plateaus (relative) that marks a carboxylic-acid O–H. */
export const ACID_OH_MIN_ELEVATION = 0.08
/** Ring C–C stretches are sharp: wider bands near 1600/1500 are overtones or combinations (e.g. in CHCl₃). */
export const RING_MAX_WIDTH = 45
/** Sharp-band limit for the aldehyde doublet and the nitrile (FWHM, cm⁻¹). */
export const SHARP_MAX_WIDTH = 60
/**
 * A band within this many cm⁻¹ below 2×ν(C=O) (or 10 above) is taken for the carbonyl overtone, not an N–H/O–H
 * (overtones fall slightly below twice the fundamental; from memory, e.g. ketones near 3400).
 */
export const CARBONYL_OVERTONE_WINDOW = 60

export type Confidence = 'high' | 'medium' | 'low'

export type GroupId =
	| 'carboxylic-acid'
	| 'aldehyde'
	| 'ester'
	| 'amide'
	| 'ketone'
	| 'conjugated-ketone'
	| 'carbonyl'
	| 'alcohol'
	| 'primary-amine'
	| 'aromatic'
	| 'alkene'
	| 'terminal-alkyne'
	| 'nitrile'
	| 'sp-ch'
	| 'sp2-ch'
	| 'sp3-ch'
	| 'methyl'
	| 'alkane'

export type GroupEvidence = {
	/** What this peak stands for in the rule, e.g. 'C=O stretch'. */
	role: string
	/** cm⁻¹ */
	position: number
	relativeIntensity: number
	/** FWHM, cm⁻¹ */
	width: number
	/** Correlation-table row (group-frequencies.ts) the position was checked against. */
	row: string
}

export type GroupSuggestion = {
	id: GroupId
	name: string
	confidence: Confidence
	evidence: Array<GroupEvidence>
	/** Why this confidence, alternatives, shifts (e.g. conjugation). */
	note: string
	/** Rows of the correlation table used, with their sources. */
	sources: Array<{ row: string; sources: Array<string>; evidence: string; facts: string }>
}

export type PeakAssignment = {
	position: number
	intensity: number
	relativeIntensity: number
	width: number
	shape: Peak['shape']
	/** Correlation-table rows whose range contains the peak, narrowest first. */
	candidates: Array<{ row: string; group: string; mode: string }>
}

export type GroupAnalysis = {
	suggestions: Array<GroupSuggestion>
	peaks: Array<PeakAssignment>
	caveat: string
	algorithm: typeof GROUPS_ALGORITHM
	algorithmVersion: string
	params: { range: Region; exclusionRegions: ReadonlyArray<Region> }
}

export type GroupOptions = {
	/** Analysed range, cm⁻¹ (default: the spectrum's own range). */
	range?: Region
	/** Regions whose peaks are ignored (default: atmospheric CO₂). */
	exclusionRegions?: ReadonlyArray<Region>
	/** Peaks already picked on this spectrum (default: picked here with default options). */
	peaks?: ReadonlyArray<Peak>
}

type Found = { peak: Peak; rel: number }

/**
 * Suggest functional groups for an absorbance spectrum (x ascending, cm⁻¹). Suggestions are sorted by
 * confidence, then by the table order of the rules. Pure.
 */
export function suggestGroups(spectrum: Spectrum, options: GroupOptions = {}): GroupAnalysis {
	const n = spectrum.x.length
	const range = options.range ?? { from: spectrum.x[0]!, to: spectrum.x[n - 1]! }
	const exclusions = options.exclusionRegions ?? DEFAULT_EXCLUSION_REGIONS
	const excluded = (p: number) => exclusions.some((r) => p >= r.from && p <= r.to)
	const peaks = (options.peaks ?? pickPeaks(spectrum, { region: range, exclusionRegions: exclusions })).filter(
		(p) => p.position >= range.from && p.position <= range.to && !excluded(p.position),
	)
	let floor = Infinity
	for (let i = 0; i < n; i++) {
		const x = spectrum.x[i]!
		if (x >= range.from && x <= range.to && spectrum.y[i]! < floor) floor = spectrum.y[i]!
	}
	let top = 0
	for (const p of peaks) top = Math.max(top, p.intensity - floor)
	const rel = (p: Peak) => (top > 0 ? Math.max(0, p.intensity - floor) / top : 0)

	/** Strongest peak with from ≤ position ≤ to that passes the filters, or null. */
	function strongest(
		from: number,
		to: number,
		minRel: number,
		filter: (p: Peak) => boolean = () => true,
	): Found | null {
		let best: Found | null = null
		for (const p of peaks) {
			if (p.position < from || p.position > to || !filter(p)) continue
			const r = rel(p)
			if (r >= minRel && (!best || r > best.rel)) best = { peak: p, rel: r }
		}
		return best
	}
	function all(from: number, to: number, minRel: number): Array<Found> {
		return peaks
			.filter((p) => p.position >= from && p.position <= to && rel(p) >= minRel)
			.map((p) => ({ peak: p, rel: rel(p) }))
	}
	function ev(found: Found, role: string, row: string): GroupEvidence {
		return { role, position: found.peak.position, relativeIntensity: found.rel, width: found.peak.width, row }
	}
	function plateau(from: number, to: number): number | null {
		const values: Array<number> = []
		for (let i = 0; i < n; i++) if (spectrum.x[i]! >= from && spectrum.x[i]! <= to) values.push(spectrum.y[i]!)
		return values.length > 0 ? median(values) : null
	}

	const suggestions: Array<GroupSuggestion> = []
	function suggest(
		id: GroupId,
		name: string,
		confidence: Confidence,
		evidence: Array<GroupEvidence>,
		note: string,
	): void {
		const rows = [...new Set(evidence.map((e) => e.row))].map((id) => groupFrequency(id))
		suggestions.push({ id, name, confidence, evidence, note, sources: rows.map(sourceOf) })
	}

	// --- C–H stretches either side of 3000 cm⁻¹ ---
	const sp3 = all(2850, 3000, MEDIUM_MIN_RELATIVE)
	const sp2 = strongest(3000, 3100, 0.01, (p) => p.width < 100)
	const sp = strongest(3250, 3340, 0.1, (p) => p.width < SHARP_MAX_WIDTH)

	// --- carbonyl (first: its overtone near 2×ν(C=O) can pose as an N–H or O–H band) ---
	const carbonyl = strongest(1630, 1870, CARBONYL_MIN_RELATIVE, (p) => p.width < 150)
	const isOvertone = (p: Peak) =>
		carbonyl !== null &&
		p.position >= 2 * carbonyl.peak.position - CARBONYL_OVERTONE_WINDOW &&
		p.position <= 2 * carbonyl.peak.position + 10

	// --- N–H: a primary amine's asymmetric/symmetric pair (≈3450/≈3370) ---
	let aminePair: [Found, Found] | null = null
	for (const high of all(3330, 3520, 0.04)) {
		if (high.peak.width >= 150 || isOvertone(high.peak)) continue
		const low = strongest(
			high.peak.position - 120,
			high.peak.position - 50,
			0.04,
			(p) => p.position >= 3250 && !isOvertone(p),
		)
		if (low) {
			aminePair = [high, low]
			break
		}
	}
	// A single N–H (or sharp O–H) band: not broad, 3150–3500, not the C=O overtone, and not a ≡C–H that has
	// its C≡C partner.
	const alkyneCC = strongest(2100, 2150, MEDIUM_MIN_RELATIVE, (p) => p.width < SHARP_MAX_WIDTH)
	const alkyneCH = alkyneCC && sp ? sp.peak : null
	const singleNH = aminePair
		? null
		: strongest(3150, 3500, 0.04, (p) => p.width < HBONDED_OH_MIN_WIDTH && !isOvertone(p) && p !== alkyneCH)

	// --- O–H ---
	const pairPositions = aminePair ? [aminePair[0].peak.position, aminePair[1].peak.position] : []
	const hbondedOH = strongest(
		3200,
		3550,
		0.08,
		(p) => p.width >= HBONDED_OH_MIN_WIDTH && !pairPositions.includes(p.position),
	)
	const baseline = Math.min(plateau(3750, 3950) ?? Infinity, plateau(1900, 2200) ?? Infinity)
	const highPlateau = plateau(3100, 3250)
	const lowPlateau = plateau(2550, 2750)
	const acidElevation =
		top > 0 && Number.isFinite(baseline) && highPlateau !== null && lowPlateau !== null
			? Math.min(highPlateau - baseline, lowPlateau - baseline) / top
			: 0
	const acidOH = acidElevation >= ACID_OH_MIN_ELEVATION

	// --- ring and double bonds ---
	const ring1600 = strongest(1565, 1625, MEDIUM_MIN_RELATIVE, (p) => p.width < RING_MAX_WIDTH)
	const ring1500 = strongest(1470, 1525, MEDIUM_MIN_RELATIVE, (p) => p.width < RING_MAX_WIDTH)
	const ringDoublet = ring1600
		? strongest(
				1565,
				1625,
				MEDIUM_MIN_RELATIVE,
				(p) =>
					Math.abs(p.position - ring1600.peak.position) >= 10 && Math.abs(p.position - ring1600.peak.position) <= 30,
			)
		: null
	const oop = strongest(675, 900, 0.2, (p) => p.width < SHARP_MAX_WIDTH)
	const aromatic = ring1600 !== null && (ring1500 !== null || ringDoublet !== null)

	const alkeneCC = strongest(1625, 1680, 0.05, (p) => !carbonyl || p !== carbonyl.peak)
	const conjugated = aromatic || alkeneCC !== null
	const nh = aminePair ? aminePair[0] : singleNH

	if (carbonyl) {
		const c = carbonyl.peak.position
		const co = ev(carbonyl, 'C=O stretch', 'co-general')
		let classified = false
		// Carboxylic acid: very broad O–H (3300–2500) with C=O.
		if (acidOH && c >= 1680 && c <= 1760) {
			const oopAcid = strongest(910, 950, MEDIUM_MIN_RELATIVE)
			const evidence = [{ ...co, row: 'co-acid' }]
			if (oopAcid) evidence.push(ev(oopAcid, 'O–H out-of-plane bend', 'oh-acid-oop'))
			suggest(
				'carboxylic-acid',
				'Carboxylic acid',
				oopAcid ? 'high' : 'medium',
				evidence,
				`very broad O–H absorption from about 3300 down to 2500 cm⁻¹ (plateaus ${(100 * acidElevation).toFixed(0)} % of the strongest band above baseline, row oh-acid) with C=O at ${c.toFixed(0)} cm⁻¹`,
			)
			classified = true
		}
		// Aldehyde: C–H Fermi doublet (≈2820 and ≈2720) with C=O.
		const lowerDoublet = strongest(2695, 2760, MEDIUM_MIN_RELATIVE, (p) => p.width < SHARP_MAX_WIDTH)
		const upperDoublet = strongest(2800, 2860, MEDIUM_MIN_RELATIVE, (p) => p.width < SHARP_MAX_WIDTH)
		if (!classified && lowerDoublet && c >= 1665 && c <= 1745) {
			const evidence = [{ ...co, row: 'co-aldehyde' }, ev(lowerDoublet, 'aldehyde C–H (≈2720)', 'ch-aldehyde')]
			if (upperDoublet) evidence.push(ev(upperDoublet, 'aldehyde C–H (≈2820)', 'ch-aldehyde'))
			suggest(
				'aldehyde',
				c < 1720 ? 'Aldehyde (conjugated)' : 'Aldehyde',
				upperDoublet ? 'high' : 'medium',
				evidence,
				upperDoublet
					? 'C=O with the aldehyde C–H doublet'
					: 'C=O with a band near 2720 cm⁻¹; the ≈2820 partner is hidden under the sp³ C–H stretches or absent',
			)
			classified = true
		}
		// Ester: C=O with two C–O stretches.
		const coAcyl = strongest(1150, 1300, C_O_MIN_RELATIVE)
		const coAlkyl = strongest(1000, 1150, C_O_SECOND_MIN_RELATIVE, (p) => !coAcyl || p !== coAcyl.peak)
		if (!classified && c >= 1715 && c <= 1760 && coAcyl) {
			const evidence = [
				{ ...co, row: c < 1735 ? 'co-ester-conjugated' : 'co-ester' },
				ev(coAcyl, 'C–O–C stretch (≈1300–1150)', 'co-ester-coc'),
			]
			if (coAlkyl) evidence.push(ev(coAlkyl, 'O–C stretch (≈1150–1000)', 'co-ester-oc'))
			let confidence: Confidence = coAlkyl ? 'high' : 'medium'
			let note = coAlkyl ? 'C=O with both C–O stretches' : 'C=O with one C–O stretch; the second is missing'
			if (nh) {
				confidence = 'low'
				note += `; an N–H band at ${nh.peak.position.toFixed(0)} cm⁻¹ points to an amide instead`
			}
			if (c < 1735 && alkeneCC)
				note += `; C=O at ${c.toFixed(0)} with C=C at ${alkeneCC.peak.position.toFixed(0)} cm⁻¹ fits an α,β-unsaturated ester (1730–1715)`
			suggest('ester', 'Ester', confidence, evidence, note)
			classified = confidence !== 'low'
		}
		// Amide: C=O with N–H (and amide II).
		const amideII = strongest(1500, 1570, 0.2)
		const inAmideI = c >= 1630 && c <= 1690
		if (!classified && nh && c <= 1760 && (inAmideI || amideII)) {
			const evidence = [
				{ ...co, row: 'co-amide' },
				ev(nh, aminePair ? 'N–H stretch pair' : 'N–H stretch', 'nh-stretch'),
			]
			if (amideII) evidence.push(ev(amideII, 'amide II (N–H bend + C–N)', 'amide-ii'))
			suggest(
				'amide',
				aminePair ? 'Amide (primary)' : 'Amide (secondary)',
				inAmideI ? 'high' : 'medium',
				evidence,
				inAmideI
					? 'C=O in the amide I range with an N–H stretch'
					: `C=O at ${c.toFixed(0)} cm⁻¹ lies above the usual amide I range 1690–1630 (as in dilute solution or a distorted axis), but an N–H stretch accompanies it`,
			)
			classified = true
		}
		// Ketones, saturated and conjugated.
		if (!classified && c >= 1700 && c <= 1730) {
			suggest(
				'ketone',
				'Ketone',
				'medium',
				[{ ...co, row: 'co-ketone' }],
				'C=O in the saturated-ketone range without the partner bands of an acid, aldehyde, ester or amide (a ketone is inferred by elimination)' +
					(c < 1710 ? '; a tertiary amide or lactam (no N–H) would also fit' : ''),
			)
			classified = true
		}
		if (!classified && c >= 1640 && c < 1700 && conjugated) {
			const partner = aromatic ? ring1600! : alkeneCC!
			const shift = 1715 - c
			suggest(
				'conjugated-ketone',
				aromatic ? 'Conjugated (aryl) ketone' : 'Conjugated (α,β-unsaturated) ketone',
				'medium',
				[
					{ ...co, row: 'co-ketone-conjugated' },
					ev(partner, aromatic ? 'aromatic ring C–C' : 'C=C stretch', aromatic ? 'ring-1600' : 'cc-alkene'),
				],
				`C=O at ${c.toFixed(0)} cm⁻¹ is about ${shift.toFixed(0)} cm⁻¹ below the saturated ketone (1715, TCA): conjugation lowers C=O by some tens of cm⁻¹ (W: 1685 vs 1720). A tertiary amide would also fit if nitrogen is present`,
			)
			classified = true
		}
		if (!classified) {
			const rows = rowsContaining(c).filter((r) => r.id.startsWith('co-') && r.id !== 'co-general')
			suggest(
				'carbonyl',
				'Carbonyl (type not resolved)',
				'low',
				[co],
				rows.length > 0
					? `C=O at ${c.toFixed(0)} cm⁻¹ fits: ${rows.map((r) => r.group).join('; ')}`
					: `C=O at ${c.toFixed(0)} cm⁻¹`,
			)
		}
	}

	// --- Alcohol: broad H-bonded O–H with C–O ---
	if (hbondedOH && !acidOH) {
		const co = strongest(1000, 1260, C_O_MIN_RELATIVE)
		const evidence = [ev(hbondedOH, 'H-bonded O–H stretch (broad)', 'oh-hbonded')]
		if (co) evidence.push(ev(co, 'C–O stretch', 'co-alcohol'))
		suggest(
			'alcohol',
			'Alcohol (or phenol)',
			co ? 'high' : 'medium',
			evidence,
			co
				? 'broad H-bonded O–H with a strong C–O stretch'
				: 'broad H-bonded O–H without a clear C–O stretch (water would look similar)',
		)
	}

	// --- Primary amine: N–H pair (+ N–H bend) ---
	if (aminePair) {
		const bend = strongest(1550, 1650, 0.1, (p) => !carbonyl || p !== carbonyl.peak)
		const cn = aromatic ? strongest(1250, 1335, C_O_MIN_RELATIVE) : null
		const evidence = [
			ev(aminePair[0], 'N–H asymmetric stretch', 'nh-stretch'),
			ev(aminePair[1], 'N–H symmetric stretch', 'nh-stretch'),
		]
		if (bend) evidence.push(ev(bend, 'N–H bend', 'nh-bend-primary'))
		if (cn) evidence.push(ev(cn, 'aromatic C–N stretch', 'cn-aromatic-amine'))
		const gap = aminePair[0].peak.position - aminePair[1].peak.position
		suggest(
			'primary-amine',
			aromatic ? 'Primary aromatic amine' : 'Primary amine',
			bend ? 'high' : 'medium',
			evidence,
			`two N–H stretches ${gap.toFixed(0)} cm⁻¹ apart (asymmetric and symmetric)${bend ? ' with the N–H bend' : ''}${carbonyl ? '; with a C=O this may be a primary amide' : ''}`,
		)
	}

	// --- Aromatic ring pair ---
	if (aromatic) {
		const evidence = [ev(ring1600!, 'ring C–C stretch (≈1600)', 'ring-1600')]
		if (ring1500) evidence.push(ev(ring1500, 'ring C–C stretch (≈1500)', 'ring-1500'))
		else if (ringDoublet) evidence.push(ev(ringDoublet, 'ring C–C stretch (≈1580)', 'ring-1600'))
		if (sp2) evidence.push(ev(sp2, 'aromatic =C–H stretch', 'ch-aromatic'))
		if (oop) evidence.push(ev(oop, 'C–H out-of-plane bend', 'oop-aromatic'))
		const support = (sp2 ? 1 : 0) + (oop ? 1 : 0)
		suggest(
			'aromatic',
			'Aromatic ring',
			support === 2 ? 'high' : support === 1 ? 'medium' : 'low',
			evidence,
			'ring stretches near 1600 and 1500 cm⁻¹' +
				(sp2 ? ', =C–H above 3000' : '') +
				(oop ? ', strong out-of-plane C–H bend' : '') +
				(aminePair ? '; the ≈1600 band may overlap the N–H bend' : ''),
		)
	}

	// --- Alkene ---
	if (alkeneCC && sp2 && !aromatic) {
		suggest(
			'alkene',
			'Alkene',
			'medium',
			[ev(alkeneCC, 'C=C stretch', 'cc-alkene'), ev(sp2, '=C–H stretch', 'ch-alkene')],
			carbonyl && carbonyl.peak.position < 1740
				? 'C=C with =C–H; conjugated with the C=O'
				: 'C=C with =C–H above 3000 cm⁻¹',
		)
	}

	// --- Triple bonds ---
	if (sp && (alkyneCC || !nh)) {
		const evidence = [ev(sp, '≡C–H stretch (sharp)', 'ch-sp')]
		if (alkyneCC) evidence.push(ev(alkyneCC, 'C≡C stretch', 'cc-triple-terminal'))
		const bend = strongest(610, 700, 0.1)
		if (bend && alkyneCC) evidence.push(ev(bend, '≡C–H bend', 'ch-alkyne-bend'))
		suggest(
			'terminal-alkyne',
			'Terminal alkyne',
			alkyneCC ? 'high' : 'low',
			evidence,
			alkyneCC
				? 'sharp ≡C–H near 3300 with C≡C near 2120'
				: 'a sharp band near 3300 without C≡C: an N–H or O–H would also fit',
		)
	}
	const nitrile = strongest(2210, 2260, MEDIUM_MIN_RELATIVE, (p) => p.width < SHARP_MAX_WIDTH)
	if (nitrile) {
		suggest(
			'nitrile',
			'Nitrile',
			nitrile.rel >= 0.1 ? 'high' : 'medium',
			[ev(nitrile, 'C≡N stretch', 'cn-nitrile')],
			'sharp band at 2260–2210 cm⁻¹; C–D stretches (e.g. CDCl₃ 2253) and internal C≡C also fall here',
		)
	}

	// --- C–H types ---
	if (sp)
		suggest(
			'sp-ch',
			'sp C–H (≡C–H)',
			alkyneCC ? 'high' : 'low',
			[ev(sp, '≡C–H stretch', 'ch-sp')],
			'sharp band near 3300 cm⁻¹',
		)
	if (sp2) {
		suggest(
			'sp2-ch',
			'sp² C–H (=C–H, above 3000 cm⁻¹)',
			aromatic || alkeneCC ? 'high' : 'medium',
			[ev(sp2, '=C–H stretch', aromatic ? 'ch-aromatic' : 'ch-alkene')],
			'C–H stretch above 3000 cm⁻¹' +
				(aromatic || alkeneCC
					? ''
					: '; without a ring or C=C band, a C–H on a carbon bearing halogens (CHCl₃ absorbs at 3019) would also fit'),
		)
	}
	if (sp3.length > 0) {
		suggest(
			'sp3-ch',
			'sp³ C–H (alkyl, below 3000 cm⁻¹)',
			sp3.length >= 2 ? 'high' : 'medium',
			sp3.slice(0, 4).map((f) => ev(f, 'C–H stretch (sp³)', 'ch-sp3')),
			'C–H stretches between 3000 and 2850 cm⁻¹',
		)
	}
	const methyl = all(1365, 1390, MEDIUM_MIN_RELATIVE)
	if (methyl.length > 0) {
		const strongestMethyl = methyl.reduce((a, b) => (b.rel > a.rel ? b : a))
		// A split pair 8–20 cm⁻¹ apart (EPST: 1389–1381 with 1372–1368; ATR reads a little low).
		const gem = methyl.some((a) =>
			methyl.some((b) => a.peak.position - b.peak.position >= 8 && a.peak.position - b.peak.position <= 20),
		)
		suggest(
			'methyl',
			'Methyl group',
			sp3.length > 0 ? 'high' : 'low',
			methyl.map((m) => ev(m, 'CH₃ symmetric bend', 'ch3-umbrella')),
			(sp3.length > 0
				? 'CH₃ umbrella bend near 1380 with sp³ C–H'
				: 'band near 1380 cm⁻¹ without sp³ C–H (other groups absorb here too)') +
				(gem ? '; the split pair suggests a gem-dimethyl (isopropyl or tert-butyl) group' : '') +
				(strongestMethyl.rel < 0.05 ? '; weak' : ''),
		)
	}

	// --- Alkane: only sp³ C–H and C–H bends ---
	const scissor = strongest(1450, 1475, MEDIUM_MIN_RELATIVE)
	const heteroatomSigns =
		carbonyl !== null ||
		hbondedOH !== null ||
		aminePair !== null ||
		singleNH !== null ||
		aromatic ||
		alkeneCC !== null ||
		sp2 !== null ||
		sp !== null ||
		nitrile !== null ||
		acidOH ||
		strongest(1000, 1320, 0.3) !== null
	if (sp3.length >= 2 && scissor && !heteroatomSigns) {
		const rock = strongest(718, 730, MEDIUM_MIN_RELATIVE)
		const evidence = [
			...sp3.slice(0, 3).map((f) => ev(f, 'C–H stretch (sp³)', 'ch-sp3')),
			ev(scissor, 'CH₂ scissor / CH₃ bend', 'ch2-scissor'),
		]
		if (methyl.length > 0) evidence.push(ev(methyl[0]!, 'CH₃ symmetric bend', 'ch3-umbrella'))
		if (rock) evidence.push(ev(rock, '–(CH₂)n– rock, n ≥ 4', 'ch2-rock'))
		suggest(
			'alkane',
			'Alkane (saturated hydrocarbon)',
			methyl.length > 0 ? 'high' : 'medium',
			evidence,
			'only sp³ C–H stretches and C–H bends; no carbonyl, O–H, N–H, C=C, aromatic or strong C–O bands' +
				(rock ? '; a chain of four or more CH₂' : ''),
		)
	}

	const order: Record<Confidence, number> = { high: 0, medium: 1, low: 2 }
	const sorted = suggestions
		.map((s, index) => ({ s, index }))
		.sort((a, b) => order[a.s.confidence] - order[b.s.confidence] || a.index - b.index)
		.map(({ s }) => s)

	return {
		suggestions: sorted,
		peaks: peaks.map((p) => ({
			position: p.position,
			intensity: p.intensity,
			relativeIntensity: rel(p),
			width: p.width,
			shape: p.shape,
			candidates: rowsContaining(p.position)
				.filter((r) => r.id !== 'co2-gas')
				.map((r) => ({ row: r.id, group: r.group, mode: r.mode })),
		})),
		caveat: GROUPS_CAVEAT,
		algorithm: GROUPS_ALGORITHM,
		algorithmVersion: ENGINE_VERSION,
		params: { range, exclusionRegions: exclusions },
	}
}

function sourceOf(row: GroupFrequencyRow): { row: string; sources: Array<string>; evidence: string; facts: string } {
	return { row: row.id, sources: row.sources, evidence: row.evidence, facts: row.facts }
}
