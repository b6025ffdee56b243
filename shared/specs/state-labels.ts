/** How each version state reads on screen and in documents (the trade's document-control terms). */
export const VERSION_STATE_LABELS = {
	draft: 'Draft',
	in_review: 'In review',
	approved: 'Approved',
	effective: 'Effective',
	superseded: 'Superseded',
	retired: 'Retired',
} as const

export type VersionState = keyof typeof VERSION_STATE_LABELS

export const VERSION_STATE_TONES = {
	draft: 'neutral',
	in_review: 'caution',
	approved: 'caution',
	effective: 'good',
	superseded: 'neutral',
	retired: 'neutral',
} as const
