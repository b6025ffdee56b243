/**
 * Tracked changes between two versions of a specification: field by field, word-level for text (the `diff`
 * package), row-level for the band table (rows follow their stable `id`), and both hashes for a changed reference
 * spectrum. `summarizeChanges` turns a diff into the sentences of a revision history and of notification e-mails.
 *
 * Pure.
 */
import { diffWords } from 'diff'
import { type ReferenceSpectrumRef } from '#shared/specs/canonical.ts'
import { type BandRow, type SpecVersionContent } from '#shared/specs/version-content.ts'

/** A version's content plus what a diff needs beyond it. */
export type DiffableVersion = SpecVersionContent & {
	versionNumber: number
	referenceSpectrum: ReferenceSpectrumRef | null
}

/** One run of a word-level diff: unchanged, or present only in the newer (`added`) or older (`removed`) text. */
export type TextPart = { value: string; added?: true; removed?: true }

export type TextField = 'scope' | 'method.samplePreparation' | 'criteria.thresholdJustification' | 'notes'
export type ValueField =
	| 'method.technique'
	| 'method.rangeFrom'
	| 'method.rangeTo'
	| 'method.resolution'
	| 'method.scans'
	| 'criteria.minCorrelation'
	| 'criteria.minDerivativeCorrelation'
	| 'criteria.defaultBandTolerance'

export type FieldChange =
	| { kind: 'text'; field: TextField; label: string; old: string; new: string; parts: Array<TextPart> }
	| { kind: 'value'; field: ValueField; label: string; old: string | number | null; new: string | number | null }

export type BandColumn = 'position' | 'tolerance' | 'assignment' | 'intensityClass' | 'shape' | 'required'

export type CellChange =
	| { column: 'position'; old: number; new: number }
	| { column: 'tolerance'; old: number | null; new: number | null }
	| { column: 'assignment'; old: string; new: string; parts: Array<TextPart> }
	| { column: 'intensityClass' | 'shape'; old: string; new: string }
	| { column: 'required'; old: boolean; new: boolean }

export type BandChange =
	| { kind: 'added'; id: string; row: BandRow }
	| { kind: 'removed'; id: string; row: BandRow }
	| { kind: 'changed'; id: string; old: BandRow; new: BandRow; cells: Array<CellChange> }

/** Every row of both tables in one sequence, for an inline redline table: removed rows sit where they were. */
export type MergedBandRow = BandChange | { kind: 'unchanged'; id: string; row: BandRow }

export type BandTableDiff = {
	/** Added, removed and changed rows, in merged-table order. */
	changes: Array<BandChange>
	rows: Array<MergedBandRow>
	/** True when rows present in both versions appear in a different order. */
	reordered: boolean
	/** Ids of the rows that moved (the fewest rows whose moving explains the new order). */
	moved: Array<string>
}

export type Region = SpecVersionContent['criteria']['exclusionRegions'][number]

export type RegionChange =
	| { kind: 'added' | 'removed'; region: Region }
	| { kind: 'relabelled'; from: number; to: number; old: string | null; new: string | null }

export type ReferenceSpectrumChange = {
	old: ReferenceSpectrumRef | null
	new: ReferenceSpectrumRef | null
	/** Both link a spectrum with the same SHA-256 (only the file name differs). */
	sameBytes: boolean
}

export type VersionDiff = {
	fromVersion: number
	toVersion: number
	fields: Array<FieldChange>
	referenceSpectrum: ReferenceSpectrumChange | null
	exclusionRegions: Array<RegionChange>
	bands: BandTableDiff
}

type Section = 'method' | 'criteria' | 'end'

const TEXT_FIELDS: ReadonlyArray<{
	field: TextField
	label: string
	section: Section
	get: (version: SpecVersionContent) => string
}> = [
	{ field: 'scope', label: 'Scope', section: 'method', get: (v) => v.scope },
	{
		field: 'method.samplePreparation',
		label: 'Sample preparation',
		section: 'method',
		get: (v) => v.method.samplePreparation,
	},
	{
		field: 'criteria.thresholdJustification',
		label: 'Threshold justification',
		section: 'criteria',
		get: (v) => v.criteria.thresholdJustification,
	},
	{ field: 'notes', label: 'Notes', section: 'end', get: (v) => v.notes },
]

const VALUE_FIELDS: ReadonlyArray<{
	field: ValueField
	label: string
	section: Section
	unit?: string
	/** How null reads, for fields where null means a default. */
	nullText?: string
	get: (version: SpecVersionContent) => string | number | null
}> = [
	{ field: 'method.technique', label: 'Technique', section: 'method', get: (v) => v.method.technique },
	{
		field: 'method.rangeFrom',
		label: 'Range lower limit',
		section: 'method',
		unit: 'cm⁻¹',
		get: (v) => v.method.rangeFrom,
	},
	{
		field: 'method.rangeTo',
		label: 'Range upper limit',
		section: 'method',
		unit: 'cm⁻¹',
		get: (v) => v.method.rangeTo,
	},
	{ field: 'method.resolution', label: 'Resolution', section: 'method', unit: 'cm⁻¹', get: (v) => v.method.resolution },
	{ field: 'method.scans', label: 'Number of scans', section: 'method', get: (v) => v.method.scans },
	{
		field: 'criteria.minCorrelation',
		label: 'Minimum correlation',
		section: 'criteria',
		get: (v) => v.criteria.minCorrelation,
	},
	{
		field: 'criteria.minDerivativeCorrelation',
		label: 'Minimum derivative correlation',
		section: 'criteria',
		nullText: 'not used',
		get: (v) => v.criteria.minDerivativeCorrelation,
	},
	{
		field: 'criteria.defaultBandTolerance',
		label: 'Default band tolerance',
		section: 'criteria',
		unit: 'cm⁻¹',
		nullText: '0.5 % of position',
		get: (v) => v.criteria.defaultBandTolerance,
	},
]

/** Document order of the fields, used to sort `VersionDiff.fields`. */
const FIELD_ORDER: ReadonlyArray<TextField | ValueField> = [
	'scope',
	'method.technique',
	'method.rangeFrom',
	'method.rangeTo',
	'method.resolution',
	'method.scans',
	'method.samplePreparation',
	'criteria.minCorrelation',
	'criteria.minDerivativeCorrelation',
	'criteria.defaultBandTolerance',
	'criteria.thresholdJustification',
	'notes',
]

/** Word-level diff of two texts; runs carry `added`/`removed` only when true. */
export function diffText(older: string, newer: string): Array<TextPart> {
	return diffWords(older, newer).map((change) => {
		const part: TextPart = { value: change.value }
		if (change.added) part.added = true
		if (change.removed) part.removed = true
		return part
	})
}

/**
 * Field-by-field changes from `older` to `newer` (normally consecutive versions, but any two work). Fields that did
 * not change are left out; `bands.rows` still lists every row. Pure.
 */
export function diffVersions(older: DiffableVersion, newer: DiffableVersion): VersionDiff {
	const fields: Array<FieldChange> = []
	for (const spec of TEXT_FIELDS) {
		const before = spec.get(older)
		const after = spec.get(newer)
		if (before !== after) {
			fields.push({
				kind: 'text',
				field: spec.field,
				label: spec.label,
				old: before,
				new: after,
				parts: diffText(before, after),
			})
		}
	}
	for (const spec of VALUE_FIELDS) {
		const before = spec.get(older)
		const after = spec.get(newer)
		if (before !== after) fields.push({ kind: 'value', field: spec.field, label: spec.label, old: before, new: after })
	}
	fields.sort((a, b) => FIELD_ORDER.indexOf(a.field) - FIELD_ORDER.indexOf(b.field))

	return {
		fromVersion: older.versionNumber,
		toVersion: newer.versionNumber,
		fields,
		referenceSpectrum: diffReference(older.referenceSpectrum, newer.referenceSpectrum),
		exclusionRegions: diffRegions(older.criteria.exclusionRegions, newer.criteria.exclusionRegions),
		bands: diffBands(older.bands, newer.bands),
	}
}

/** True when the diff records any change at all. */
export function hasChanges(diff: VersionDiff): boolean {
	return (
		diff.fields.length > 0 ||
		diff.referenceSpectrum !== null ||
		diff.exclusionRegions.length > 0 ||
		diff.bands.changes.length > 0 ||
		diff.bands.reordered
	)
}

function diffReference(
	before: ReferenceSpectrumRef | null,
	after: ReferenceSpectrumRef | null,
): ReferenceSpectrumChange | null {
	if (before === null && after === null) return null
	const sameBytes = before !== null && after !== null && before.sha256.toLowerCase() === after.sha256.toLowerCase()
	if (sameBytes && before.fileName === after.fileName) return null
	return { old: before, new: after, sameBytes }
}

function regionKey(region: Region): string {
	return `${region.from}–${region.to}`
}

function diffRegions(before: ReadonlyArray<Region>, after: ReadonlyArray<Region>): Array<RegionChange> {
	const oldByKey = new Map(before.map((region) => [regionKey(region), region]))
	const newByKey = new Map(after.map((region) => [regionKey(region), region]))
	const changes: Array<RegionChange> = []
	for (const region of before) {
		const match = newByKey.get(regionKey(region))
		if (!match) changes.push({ kind: 'removed', region })
		else if ((match.label ?? null) !== (region.label ?? null)) {
			changes.push({
				kind: 'relabelled',
				from: region.from,
				to: region.to,
				old: region.label ?? null,
				new: match.label ?? null,
			})
		}
	}
	for (const region of after) {
		if (!oldByKey.has(regionKey(region))) changes.push({ kind: 'added', region })
	}
	return changes
}

function diffCells(before: BandRow, after: BandRow): Array<CellChange> {
	const cells: Array<CellChange> = []
	if (before.position !== after.position) cells.push({ column: 'position', old: before.position, new: after.position })
	if (before.tolerance !== after.tolerance)
		cells.push({ column: 'tolerance', old: before.tolerance, new: after.tolerance })
	if (before.assignment !== after.assignment) {
		cells.push({
			column: 'assignment',
			old: before.assignment,
			new: after.assignment,
			parts: diffText(before.assignment, after.assignment),
		})
	}
	if (before.intensityClass !== after.intensityClass) {
		cells.push({ column: 'intensityClass', old: before.intensityClass, new: after.intensityClass })
	}
	if (before.shape !== after.shape) cells.push({ column: 'shape', old: before.shape, new: after.shape })
	if (before.required !== after.required) cells.push({ column: 'required', old: before.required, new: after.required })
	return cells
}

function diffBands(before: ReadonlyArray<BandRow>, after: ReadonlyArray<BandRow>): BandTableDiff {
	const oldById = new Map(before.map((row) => [row.id, row]))
	const newIds = new Set(after.map((row) => row.id))

	// Removed rows are anchored after the nearest preceding row that survives, so they print where they were.
	const removedAfter = new Map<string | null, Array<BandRow>>()
	let anchor: string | null = null
	for (const row of before) {
		if (newIds.has(row.id)) {
			anchor = row.id
			continue
		}
		const list = removedAfter.get(anchor) ?? []
		list.push(row)
		removedAfter.set(anchor, list)
	}

	const rows: Array<MergedBandRow> = []
	const pushRemoved = (key: string | null) => {
		for (const row of removedAfter.get(key) ?? []) rows.push({ kind: 'removed', id: row.id, row })
	}
	pushRemoved(null)
	for (const row of after) {
		const previous = oldById.get(row.id)
		if (!previous) {
			rows.push({ kind: 'added', id: row.id, row })
			continue
		}
		const cells = diffCells(previous, row)
		rows.push(
			cells.length > 0
				? { kind: 'changed', id: row.id, old: previous, new: row, cells }
				: { kind: 'unchanged', id: row.id, row },
		)
		pushRemoved(row.id)
	}

	const commonOld = before.filter((row) => newIds.has(row.id)).map((row) => row.id)
	const commonNew = after.filter((row) => oldById.has(row.id)).map((row) => row.id)
	const stayed = new Set(longestCommonSubsequence(commonOld, commonNew))
	const moved = commonNew.filter((id) => !stayed.has(id))

	return {
		changes: rows.filter((row): row is BandChange => row.kind !== 'unchanged'),
		rows,
		reordered: moved.length > 0,
		moved,
	}
}

/** Classic O(n·m) LCS; band tables hold at most 200 rows. */
function longestCommonSubsequence(a: ReadonlyArray<string>, b: ReadonlyArray<string>): Array<string> {
	const table: Array<Array<number>> = Array.from({ length: a.length + 1 }, () =>
		new Array<number>(b.length + 1).fill(0),
	)
	for (let i = a.length - 1; i >= 0; i--) {
		for (let j = b.length - 1; j >= 0; j--) {
			table[i]![j] = a[i] === b[j] ? table[i + 1]![j + 1]! + 1 : Math.max(table[i + 1]![j]!, table[i]![j + 1]!)
		}
	}
	const result: Array<string> = []
	let i = 0
	let j = 0
	while (i < a.length && j < b.length) {
		if (a[i] === b[j]) {
			result.push(a[i]!)
			i++
			j++
		} else if (table[i + 1]![j]! >= table[i]![j + 1]!) i++
		else j++
	}
	return result
}

const CM = 'cm⁻¹'

function formatValue(value: string | number | null, unit: string | undefined, nullText: string | undefined): string {
	if (value === null) return nullText ?? 'none'
	return unit ? `${value} ${unit}` : String(value)
}

function formatChange(
	before: string | number | null,
	after: string | number | null,
	unit?: string,
	nullText?: string,
): string {
	if (unit && typeof before === 'number' && typeof after === 'number') return `${before} → ${after} ${unit}`
	return `${formatValue(before, unit, nullText)} → ${formatValue(after, unit, nullText)}`
}

function quote(text: string): string {
	return `“${text}”`
}

function shortHash(sha256: string): string {
	return `SHA-256 ${sha256.toLowerCase().slice(0, 12)}…`
}

function textSentence(change: Extract<FieldChange, { kind: 'text' }>): string {
	if (change.old.trim() === '') return `${change.label} added`
	if (change.new.trim() === '') return `${change.label} removed`
	if (change.parts.every((part) => !part.added && !part.removed)) return `${change.label}: spacing changed`
	return `${change.label} reworded`
}

function fieldSentence(change: FieldChange): string {
	if (change.kind === 'text') return textSentence(change)
	const spec = VALUE_FIELDS.find((candidate) => candidate.field === change.field)
	return `${change.label} ${formatChange(change.old, change.new, spec?.unit, spec?.nullText)}`
}

function fieldSection(change: FieldChange): Section {
	const specs: ReadonlyArray<{ field: string; section: Section }> = [...TEXT_FIELDS, ...VALUE_FIELDS]
	return specs.find((spec) => spec.field === change.field)?.section ?? 'end'
}

function referenceSentence(change: ReferenceSpectrumChange): string {
	const describe = (ref: ReferenceSpectrumRef) => `${ref.fileName} (${shortHash(ref.sha256)})`
	if (change.old === null && change.new !== null) return `Reference spectrum linked: ${describe(change.new)}`
	if (change.old !== null && change.new === null) {
		return `Reference spectrum unlinked (was ${change.old.fileName}, ${shortHash(change.old.sha256)})`
	}
	if (change.old !== null && change.new !== null) {
		if (change.sameBytes) {
			return `Reference spectrum file name ${quote(change.old.fileName)} → ${quote(change.new.fileName)} (same bytes)`
		}
		return `Reference spectrum replaced: ${describe(change.old)} → ${describe(change.new)}`
	}
	return 'Reference spectrum unchanged'
}

function regionSentence(change: RegionChange): string {
	if (change.kind === 'relabelled') {
		return `Exclusion region ${change.from}–${change.to} ${CM} relabelled ${quote(change.old ?? '')} → ${quote(change.new ?? '')}`
	}
	const label = change.region.label ? ` (${change.region.label})` : ''
	return `Exclusion region ${change.region.from}–${change.region.to} ${CM} ${change.kind}${label}`
}

function cellPhrase(cell: CellChange): string {
	switch (cell.column) {
		case 'position':
			return `position ${cell.old} → ${cell.new} ${CM}`
		case 'tolerance':
			return `tolerance ${formatChange(cell.old, cell.new, CM, 'default')}`
		case 'assignment':
			return `assignment ${quote(cell.old)} → ${quote(cell.new)}`
		case 'intensityClass':
			return `intensity ${cell.old} → ${cell.new}`
		case 'shape':
			return `shape ${cell.old} → ${cell.new}`
		case 'required':
			return cell.new ? 'now required' : 'no longer required'
	}
}

function bandSentence(change: BandChange): string {
	switch (change.kind) {
		case 'added': {
			const assignment = change.row.assignment ? ` (${change.row.assignment})` : ''
			return `Band ${change.row.position} ${CM} added${assignment}`
		}
		case 'removed':
			return `Band ${change.row.position} ${CM} removed`
		case 'changed':
			return `Band ${change.old.position} ${CM}: ${change.cells.map(cellPhrase).join('; ')}`
	}
}

/**
 * One sentence per change, in document order (scope and method, reference spectrum, criteria, exclusion regions,
 * band table, notes), e.g. "Band 1715 cm⁻¹: tolerance 4 → 6 cm⁻¹", "Minimum correlation 0.95 → 0.98",
 * "Scope reworded". Empty when nothing changed. Pure.
 */
export function summarizeChanges(diff: VersionDiff): Array<string> {
	const inSection = (section: Section) =>
		diff.fields.filter((change) => fieldSection(change) === section).map(fieldSentence)
	const sentences = [...inSection('method')]
	if (diff.referenceSpectrum) sentences.push(referenceSentence(diff.referenceSpectrum))
	sentences.push(...inSection('criteria'))
	sentences.push(...diff.exclusionRegions.map(regionSentence))
	sentences.push(...diff.bands.changes.map(bandSentence))
	if (diff.bands.reordered) sentences.push('Band table reordered')
	sentences.push(...inSection('end'))
	return sentences
}
