/**
 * Acceptance criteria of an identity test, as a specification stores them (zod schema: the boundary for forms,
 * the API, the CLI's --criteria file and jsonb). Pure.
 */
import { z } from 'zod'

import { DEFAULT_EXCLUSION_REGIONS } from '#shared/spectra/preprocess.ts'

/**
 * Ph. Eur. 2.2.24 (reference-spectrum identification): positions of significant bands agree within 0.5 % of
 * the wavenumber scale — FACTS.md §1.1 [READ-2°, a near-translation]; ±5 cm⁻¹ at 1000 cm⁻¹ [DERIVED].
 * Used as the band tolerance when neither the band nor the criteria set one.
 */
export const PH_EUR_BAND_TOLERANCE_PERCENT = 0.5

/** Default compared range: spectra "recorded over 4000–650 cm⁻¹" (BP 2012 Appendix II A, FACTS.md §2.2 [READ]). */
export const DEFAULT_RANGE = { from: 650, to: 4000 } as const

/**
 * Smallest relative intensity (0–1, strongest band = 1) of a sample band that counts as "strong" when looking
 * for bands the reference lacks. Common practice, no source.
 */
export const DEFAULT_EXTRA_BAND_MIN_RELATIVE_INTENSITY = 0.1

export const RegionSchema = z
	.object({
		from: z.number().finite().min(0).max(15000),
		to: z.number().finite().min(0).max(15000),
		label: z.string().trim().max(200).optional(),
	})
	.refine((r) => r.from < r.to, { message: '`from` must be below `to` (cm⁻¹)' })

export const IntensityClassSchema = z.enum(['vs', 's', 'm', 'w', 'vw', 'v'])
export const BandShapeSchema = z.enum(['sharp', 'broad'])

export const BandSchema = z.object({
	/** Expected band maximum, cm⁻¹. */
	position: z.number().finite().min(100).max(15000),
	/** ± cm⁻¹; when absent, `defaultBandTolerance`, else 0.5 % of `position`. */
	tolerance: z.number().finite().positive().max(200).optional(),
	assignment: z.string().trim().max(300).default(''),
	intensityClass: IntensityClassSchema.optional(),
	shape: BandShapeSchema.optional(),
	/** A required band that is missing or out of tolerance fails the test. */
	required: z.boolean().default(true),
})

export const BaselineSchema = z.discriminatedUnion('method', [
	z.object({ method: z.literal('none') }),
	z.object({ method: z.literal('airpls'), lambda: z.number().positive().optional() }),
	z.object({
		method: z.literal('als'),
		lambda: z.number().positive().optional(),
		p: z.number().gt(0).lt(0.5).optional(),
	}),
])

export const AcceptanceCriteriaSchema = z
	.object({
		/** Minimum Pearson correlation over the included regions, in [−1, 1]. */
		minCorrelation: z.number().min(-1).max(1),
		/** Minimum first-derivative correlation; null = not used. */
		minDerivativeCorrelation: z.number().min(-1).max(1).nullable().default(null),
		/** Maximum Euclidean distance of the unit-normalised spectra (0 … √2); null = not used. */
		maxDistance: z.number().min(0).max(2).nullable().default(null),
		/** ± cm⁻¹ for bands without their own tolerance; null = 0.5 % of each band's position (Ph. Eur.). */
		defaultBandTolerance: z.number().finite().positive().max(200).nullable().default(null),
		bands: z.array(BandSchema).max(200).default([]),
		/** Largest allowed |relative intensity (sample) − relative intensity (reference)| of a matched band; null = report only. */
		relativeIntensityTolerance: z.number().gt(0).max(1).nullable().default(null),
		/** Strong sample bands absent from the reference fail the test when true (otherwise they are reported). */
		failOnExtraBands: z.boolean().default(false),
		extraBandMinRelativeIntensity: z.number().gt(0).max(1).default(DEFAULT_EXTRA_BAND_MIN_RELATIVE_INTENSITY),
		exclusionRegions: z
			.array(RegionSchema)
			.max(50)
			.default(DEFAULT_EXCLUSION_REGIONS.map((r) => ({ ...r }))),
		range: RegionSchema.default({ ...DEFAULT_RANGE }),
		baseline: BaselineSchema.default({ method: 'none' }),
	})
	.strict()

/** Parsed criteria with every default filled in. */
export type AcceptanceCriteria = z.output<typeof AcceptanceCriteriaSchema>
/** What a caller may write (defaults optional). */
export type AcceptanceCriteriaInput = z.input<typeof AcceptanceCriteriaSchema>
export type BandSpec = z.output<typeof BandSchema>

/** The tolerance (± cm⁻¹) that applies to `band` under `criteria`. */
export function bandTolerance(band: Pick<BandSpec, 'position' | 'tolerance'>, defaultTolerance: number | null): number {
	return band.tolerance ?? defaultTolerance ?? (PH_EUR_BAND_TOLERANCE_PERCENT / 100) * band.position
}
