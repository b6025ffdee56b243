import { z } from 'zod'

export const SPECTRUM_PURPOSE_LABELS = {
	reference: 'Reference (from a reference standard)',
	sample: 'Sample',
	'instrument-check': 'Instrument check (polystyrene film)',
	other: 'Other',
} as const

const optionalText = (max: number) =>
	z
		.string()
		.trim()
		.max(max)
		.optional()
		.transform((value) => value || null)

/** What the uploader says about a batch of spectra (applied to every file of the batch). */
export const SpectrumMetadataSchema = z.object({
	purpose: z.enum(['reference', 'sample', 'instrument-check', 'other']).default('reference'),
	materialId: z
		.string()
		.uuid('Pick a material from the list')
		.optional()
		.transform((value) => value ?? null),
	technique: optionalText(100),
	instrument: optionalText(200),
	resolution: z.coerce
		.number()
		.positive('Resolution is a positive number of cm⁻¹')
		.max(64)
		.optional()
		.transform((value) => value ?? null),
	acquiredOn: z.iso
		.date({ message: 'Use a date like 2026-11-30' })
		.optional()
		.transform((value) => value ?? null),
	referenceStandardName: optionalText(200),
	referenceStandardLot: optionalText(100),
	notes: optionalText(2000),
})
export type SpectrumMetadata = z.output<typeof SpectrumMetadataSchema>
