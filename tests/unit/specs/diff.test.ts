import fc from 'fast-check'
import { expect, test } from 'vitest'

import { type DiffableVersion, diffText, diffVersions, hasChanges, summarizeChanges } from '#shared/specs/diff.ts'
import { type BandRow, emptyVersionContent } from '#shared/specs/version-content.ts'

// Tracked diffs are a product feature (issue 5 item 3); EU GMP Annex 11 §8.2/§9 and 21 CFR 11.10(k) ask for a
// change history (FACTS.md §3.1 [READ], §3.2 [READ-2°]). The expected outputs below are our own worked cases.

function band(id: string, position: number, overrides: Partial<BandRow> = {}): BandRow {
	return {
		id,
		position,
		tolerance: 4,
		assignment: '',
		intensityClass: 'm',
		shape: 'sharp',
		required: true,
		...overrides,
	}
}

const HASH_A = 'a'.repeat(64)
const HASH_B = 'b'.repeat(64)

function version(overrides: Partial<DiffableVersion> = {}): DiffableVersion {
	return {
		...emptyVersionContent(),
		versionNumber: 1,
		scope: 'Identification of lactose monohydrate by ATR.',
		referenceSpectrumId: '6f1c1c7e-3a2b-4c4d-8e8f-111111111111',
		referenceSpectrum: { sha256: HASH_A, fileName: 'lactose-2025.jdx' },
		bands: [
			band('b1', 3330, { assignment: 'O–H stretch', shape: 'broad' }),
			band('b2', 1715, { assignment: 'C=O stretch', intensityClass: 's' }),
			band('b3', 1030, { assignment: 'C–O stretch', intensityClass: 'vs' }),
		],
		...overrides,
	}
}

test('[DIFF-001] identical versions have no changes and no summary', () => {
	const diff = diffVersions(version(), version({ versionNumber: 2 }))
	expect(hasChanges(diff)).toBe(false)
	expect(summarizeChanges(diff)).toEqual([])
	expect(diff.bands.rows.map((row) => row.kind)).toEqual(['unchanged', 'unchanged', 'unchanged'])
	expect(diff).toMatchObject({ fromVersion: 1, toVersion: 2 })
})

test('[DIFF-002] text fields get a word-level diff', () => {
	const newer = version({ scope: 'Identification of anhydrous lactose by ATR-FTIR.' })
	const diff = diffVersions(version(), newer)
	expect(diff.fields).toEqual([
		{
			kind: 'text',
			field: 'scope',
			label: 'Scope',
			old: 'Identification of lactose monohydrate by ATR.',
			new: 'Identification of anhydrous lactose by ATR-FTIR.',
			parts: [
				{ value: 'Identification of ' },
				{ value: 'anhydrous ', added: true },
				{ value: 'lactose ' },
				{ value: 'monohydrate ', removed: true },
				{ value: 'by ATR' },
				{ value: '-FTIR', added: true },
				{ value: '.' },
			],
		},
	])
	expect(summarizeChanges(diff)).toEqual(['Scope reworded'])
	// Rebuilding each side from the parts gives back the two texts.
	const parts = diff.fields[0]!.kind === 'text' ? diff.fields[0]!.parts : []
	expect(
		parts
			.filter((p) => !p.added)
			.map((p) => p.value)
			.join(''),
	).toBe(version().scope)
	expect(
		parts
			.filter((p) => !p.removed)
			.map((p) => p.value)
			.join(''),
	).toBe(newer.scope)
})

test('[DIFF-003] numbers and enums are reported old → new, with units and defaults spelled out', () => {
	const older = version()
	const newer = version({
		method: { ...older.method, technique: 'KBr disc', resolution: 2 },
		criteria: { ...older.criteria, minCorrelation: 0.98, defaultBandTolerance: 6, minDerivativeCorrelation: 0.9 },
	})
	const diff = diffVersions(older, newer)
	expect(diff.fields.map((f) => [f.field, f.old, f.new])).toEqual([
		['method.technique', 'ATR', 'KBr disc'],
		['method.resolution', 4, 2],
		['criteria.minCorrelation', 0.95, 0.98],
		['criteria.minDerivativeCorrelation', null, 0.9],
		['criteria.defaultBandTolerance', null, 6],
	])
	expect(summarizeChanges(diff)).toEqual([
		'Technique ATR → KBr disc',
		'Resolution 4 → 2 cm⁻¹',
		'Minimum correlation 0.95 → 0.98',
		'Minimum derivative correlation not used → 0.9',
		'Default band tolerance 0.5 % of position → 6 cm⁻¹',
	])
})

test('[DIFF-004] a changed band row lists its changed cells', () => {
	const older = version()
	const newer = version({
		bands: [
			older.bands[0]!,
			{ ...older.bands[1]!, tolerance: 6, intensityClass: 'vs', assignment: 'C=O stretch, ester' },
			{ ...older.bands[2]!, tolerance: null, required: false },
		],
	})
	const diff = diffVersions(older, newer)
	expect(diff.bands.changes).toEqual([
		{
			kind: 'changed',
			id: 'b2',
			old: older.bands[1],
			new: newer.bands[1],
			cells: [
				{ column: 'tolerance', old: 4, new: 6 },
				{
					column: 'assignment',
					old: 'C=O stretch',
					new: 'C=O stretch, ester',
					parts: [{ value: 'C=O stretch' }, { value: ', ester', added: true }],
				},
				{ column: 'intensityClass', old: 's', new: 'vs' },
			],
		},
		{
			kind: 'changed',
			id: 'b3',
			old: older.bands[2],
			new: newer.bands[2],
			cells: [
				{ column: 'tolerance', old: 4, new: null },
				{ column: 'required', old: true, new: false },
			],
		},
	])
	expect(summarizeChanges(diff)).toEqual([
		'Band 1715 cm⁻¹: tolerance 4 → 6 cm⁻¹; assignment “C=O stretch” → “C=O stretch, ester”; intensity s → vs',
		'Band 1030 cm⁻¹: tolerance 4 cm⁻¹ → default; no longer required',
	])
	expect(diff.bands.reordered).toBe(false)
})

test('[DIFF-005] added and removed rows; removed rows keep their place in the merged table', () => {
	const older = version()
	const newer = version({
		bands: [older.bands[0]!, older.bands[2]!, band('b4', 1600, { assignment: 'C=C aromatic' }), band('b5', 720)],
	})
	const diff = diffVersions(older, newer)
	expect(diff.bands.rows.map((row) => [row.kind, row.id])).toEqual([
		['unchanged', 'b1'],
		['removed', 'b2'],
		['unchanged', 'b3'],
		['added', 'b4'],
		['added', 'b5'],
	])
	expect(summarizeChanges(diff)).toEqual([
		'Band 1715 cm⁻¹ removed',
		'Band 1600 cm⁻¹ added (C=C aromatic)',
		'Band 720 cm⁻¹ added',
	])
	expect(diff.bands.reordered).toBe(false)
	// A removed first row is placed before everything.
	const first = diffVersions(older, version({ bands: older.bands.slice(1) }))
	expect(first.bands.rows.map((row) => [row.kind, row.id])).toEqual([
		['removed', 'b1'],
		['unchanged', 'b2'],
		['unchanged', 'b3'],
	])
})

test('[DIFF-006] reordering is detected and the moved rows are named; a changed position is not a move', () => {
	const older = version()
	const [b1, b2, b3] = older.bands as [BandRow, BandRow, BandRow]
	const moved = diffVersions(older, version({ bands: [b2, b3, b1] }))
	expect(moved.bands).toMatchObject({ reordered: true, moved: ['b1'], changes: [] })
	expect(summarizeChanges(moved)).toEqual(['Band table reordered'])
	expect(hasChanges(moved)).toBe(true)
	const shifted = diffVersions(older, version({ bands: [b1, { ...b2, position: 1712 }, b3] }))
	expect(shifted.bands.reordered).toBe(false)
	expect(summarizeChanges(shifted)).toEqual(['Band 1715 cm⁻¹: position 1715 → 1712 cm⁻¹'])
	// Removing a row in the middle is not a reorder.
	expect(diffVersions(older, version({ bands: [b1, b3] })).bands.reordered).toBe(false)
})

test('[DIFF-007] a changed reference spectrum reports both hashes', () => {
	const older = version()
	const replaced = diffVersions(older, version({ referenceSpectrum: { sha256: HASH_B, fileName: 'lactose-2026.jdx' } }))
	expect(replaced.referenceSpectrum).toEqual({
		old: { sha256: HASH_A, fileName: 'lactose-2025.jdx' },
		new: { sha256: HASH_B, fileName: 'lactose-2026.jdx' },
		sameBytes: false,
	})
	expect(summarizeChanges(replaced)).toEqual([
		'Reference spectrum replaced: lactose-2025.jdx (SHA-256 aaaaaaaaaaaa…) → lactose-2026.jdx (SHA-256 bbbbbbbbbbbb…)',
	])
	const renamed = diffVersions(
		older,
		version({ referenceSpectrum: { sha256: HASH_A.toUpperCase(), fileName: 'lactose.jdx' } }),
	)
	expect(renamed.referenceSpectrum?.sameBytes).toBe(true)
	expect(summarizeChanges(renamed)).toEqual([
		'Reference spectrum file name “lactose-2025.jdx” → “lactose.jdx” (same bytes)',
	])
	const unlinked = version({ referenceSpectrumId: null, referenceSpectrum: null })
	expect(summarizeChanges(diffVersions(unlinked, older))).toEqual([
		'Reference spectrum linked: lactose-2025.jdx (SHA-256 aaaaaaaaaaaa…)',
	])
	expect(summarizeChanges(diffVersions(older, unlinked))).toEqual([
		'Reference spectrum unlinked (was lactose-2025.jdx, SHA-256 aaaaaaaaaaaa…)',
	])
	expect(diffVersions(unlinked, unlinked).referenceSpectrum).toBeNull()
})

test('[DIFF-008] exclusion regions: added, removed and relabelled', () => {
	const older = version()
	const newer = version({
		criteria: {
			...older.criteria,
			exclusionRegions: [
				{ from: 2280, to: 2400, label: 'CO₂' },
				{ from: 3500, to: 3900, label: 'Water vapour' },
			],
		},
	})
	expect(summarizeChanges(diffVersions(older, newer))).toEqual([
		'Exclusion region 2280–2400 cm⁻¹ relabelled “Atmospheric CO₂” → “CO₂”',
		'Exclusion region 3500–3900 cm⁻¹ added (Water vapour)',
	])
	const none = version({ criteria: { ...older.criteria, exclusionRegions: [] } })
	expect(summarizeChanges(diffVersions(older, none))).toEqual([
		'Exclusion region 2280–2400 cm⁻¹ removed (Atmospheric CO₂)',
	])
})

test('[DIFF-009] the summary follows document order: method, reference, criteria, regions, bands, notes', () => {
	const older = version({ notes: 'Store the reference under nitrogen.' })
	const newer = version({
		versionNumber: 2,
		notes: '',
		scope: 'Identification of lactose monohydrate by ATR (diamond crystal).',
		method: { ...older.method, samplePreparation: 'Press the powder onto the crystal.' },
		referenceSpectrum: { sha256: HASH_B, fileName: 'lactose-2026.jdx' },
		criteria: {
			...older.criteria,
			minCorrelation: 0.98,
			thresholdJustification: 'Replicates ≥ 0.995; nearest other ≤ 0.93.',
		},
		bands: [older.bands[1]!, older.bands[0]!, older.bands[2]!, band('b4', 1600)],
	})
	expect(summarizeChanges(diffVersions(older, newer))).toEqual([
		'Scope reworded',
		'Sample preparation added',
		'Reference spectrum replaced: lactose-2025.jdx (SHA-256 aaaaaaaaaaaa…) → lactose-2026.jdx (SHA-256 bbbbbbbbbbbb…)',
		'Minimum correlation 0.95 → 0.98',
		'Threshold justification added',
		'Band 1600 cm⁻¹ added',
		'Band table reordered',
		'Notes removed',
	])
})

test('[DIFF-010] whitespace-only edits are reported as such', () => {
	const diff = diffVersions(version(), version({ scope: 'Identification of lactose  monohydrate by ATR.' }))
	expect(summarizeChanges(diff)).toEqual(['Scope: spacing changed'])
	expect(diffText('', 'New text')).toEqual([{ value: 'New text', added: true }])
})

const arbitraryBands = fc.uniqueArray(
	fc.record({ id: fc.constantFrom('a', 'b', 'c', 'd', 'e', 'f'), position: fc.integer({ min: 400, max: 4000 }) }),
	{ selector: (row) => row.id, maxLength: 6 },
)

test('[DIFF-011] swapping the two versions swaps added and removed rows (fast-check)', () => {
	fc.assert(
		fc.property(arbitraryBands, arbitraryBands, (a, b) => {
			const older = version({ bands: a.map((row) => band(row.id, row.position)) })
			const newer = version({ bands: b.map((row) => band(row.id, row.position)) })
			const ids = (kind: string, diff: ReturnType<typeof diffVersions>) =>
				diff.bands.changes
					.filter((c) => c.kind === kind)
					.map((c) => c.id)
					.sort()
			const forward = diffVersions(older, newer)
			const backward = diffVersions(newer, older)
			expect(ids('added', forward)).toEqual(ids('removed', backward))
			expect(ids('changed', forward)).toEqual(ids('changed', backward))
			expect(forward.bands.reordered).toBe(backward.bands.reordered)
			// Every row of both tables appears exactly once in the merged table.
			expect(forward.bands.rows.map((row) => row.id).sort()).toEqual([...new Set([...a, ...b].map((r) => r.id))].sort())
		}),
	)
})
