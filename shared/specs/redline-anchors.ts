import type { BandRow, SpecVersionContent } from '#shared/specs/version-content.ts'

/** The text fields a reviewer can redline with suggested replacement text, and how they read on screen. */
export const TEXT_ANCHORS = {
	scope: 'Scope',
	'method.samplePreparation': 'Sample preparation',
	'criteria.thresholdJustification': 'Justification of the thresholds',
	notes: 'Notes',
} as const
export type TextAnchor = keyof typeof TEXT_ANCHORS

/** Other fields a redline can point at (a comment only; the author edits them by hand). */
export const FIELD_ANCHORS = {
	...TEXT_ANCHORS,
	method: 'Method',
	referenceSpectrum: 'Reference spectrum',
	criteria: 'Acceptance criteria',
	changeReason: 'Reason for this version',
} as const

/** 'band:<rowId>' anchors a redline to one band-table row; its suggestion replaces the row's assignment. */
export function bandAnchor(rowId: string): string {
	return `band:${rowId}`
}

export function isTextAnchor(anchor: string): anchor is TextAnchor {
	return anchor in TEXT_ANCHORS
}

/** How an anchor reads: a field name, or the band row with its position. */
export function describeAnchor(anchor: string, bands: ReadonlyArray<BandRow>): string {
	if (anchor.startsWith('band:')) {
		const row = bands.find((band) => band.id === anchor.slice(5))
		return row ? `Band ${row.position} cm⁻¹` : 'A band that is no longer in the table'
	}
	return FIELD_ANCHORS[anchor as keyof typeof FIELD_ANCHORS] ?? anchor
}

/** The anchors a redline may use on this content. */
export function validAnchor(anchor: string, content: SpecVersionContent): boolean {
	if (anchor.startsWith('band:')) return content.bands.some((band) => band.id === anchor.slice(5))
	return anchor in FIELD_ANCHORS
}

/**
 * The content with a redline's suggested text applied: a text field is replaced, a band row's assignment
 * is replaced. Returns null when the anchor cannot take a suggestion.
 */
export function applySuggestion(content: SpecVersionContent, anchor: string, text: string): SpecVersionContent | null {
	switch (anchor) {
		case 'scope':
			return { ...content, scope: text }
		case 'notes':
			return { ...content, notes: text }
		case 'method.samplePreparation':
			return { ...content, method: { ...content.method, samplePreparation: text } }
		case 'criteria.thresholdJustification':
			return { ...content, criteria: { ...content.criteria, thresholdJustification: text } }
	}
	if (anchor.startsWith('band:')) {
		const id = anchor.slice(5)
		if (!content.bands.some((band) => band.id === id)) return null
		return { ...content, bands: content.bands.map((band) => (band.id === id ? { ...band, assignment: text } : band)) }
	}
	return null
}
