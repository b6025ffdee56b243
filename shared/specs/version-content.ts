/**
 * The content of one specification version: what an author drafts, a reviewer redlines and an approver
 * signs. Stored as one jsonb document per version (zod-parsed on every read), so that the whole of it —
 * band table included — is covered by one revision number, one content hash and one database lock.
 */
import { z } from 'zod'
import {
	type AcceptanceCriteriaInput,
	BandShapeSchema,
	IntensityClassSchema,
	RegionSchema,
} from '#shared/spectra/criteria.ts'

/** Sampling techniques of the trade (USP <197> preparation codes and Ph. Eur. 2.2.24 preparations, FACTS.md §2). */
export const TECHNIQUES = [
	'ATR',
	'KBr disc',
	'KCl disc',
	'Mull (liquid paraffin)',
	'Liquid film',
	'Solution',
	'Diffuse reflectance',
] as const
export type Technique = (typeof TECHNIQUES)[number]

export const MethodSchema = z
	.object({
		technique: z.enum(TECHNIQUES),
		/** Lower end of the recorded range, cm⁻¹. */
		rangeFrom: z.number().finite().min(100).max(15000),
		/** Upper end of the recorded range, cm⁻¹. */
		rangeTo: z.number().finite().min(100).max(15000),
		/** Nominal resolution, cm⁻¹ (e.g. 4). */
		resolution: z.number().finite().positive().max(64),
		scans: z.number().int().min(1).max(10_000),
		samplePreparation: z.string().trim().max(5000),
	})
	.refine((method) => method.rangeFrom < method.rangeTo, {
		message: 'The lower end of the range must be below the upper end',
		path: ['rangeFrom'],
	})

/** One row of the band table. `id` is stable across versions so that diffs and redlines can follow a row. */
export const BandRowSchema = z.object({
	id: z.string().min(1).max(64),
	/** Expected band maximum, cm⁻¹. */
	position: z.number().finite().min(100).max(15000),
	/** ± cm⁻¹; null = the version's default tolerance. */
	tolerance: z.number().finite().positive().max(200).nullable(),
	// NOTE: form parsing turns empty strings into undefined, so an empty assignment needs its default.
	assignment: z.string().trim().max(300).default(''),
	intensityClass: IntensityClassSchema,
	shape: BandShapeSchema,
	required: z.boolean(),
})
export type BandRow = z.infer<typeof BandRowSchema>

export const VersionCriteriaSchema = z.object({
	minCorrelation: z.number().min(-1).max(1),
	minDerivativeCorrelation: z.number().min(-1).max(1).nullable(),
	/** ± cm⁻¹ for rows without their own; null = 0.5 % of each position (Ph. Eur. 2.2.24, FACTS.md §1.1). */
	defaultBandTolerance: z.number().finite().positive().max(200).nullable(),
	exclusionRegions: z.array(RegionSchema).max(50),
	/** Why these thresholds: e.g. the replicate and nearest non-target correlations they sit between. */
	thresholdJustification: z.string().trim().max(5000),
})

export const SpecVersionContentSchema = z.object({
	scope: z.string().trim().max(5000),
	method: MethodSchema,
	referenceSpectrumId: z.string().uuid().nullable(),
	criteria: VersionCriteriaSchema,
	bands: z.array(BandRowSchema).max(200),
	notes: z.string().trim().max(10_000),
})
export type SpecVersionContent = z.infer<typeof SpecVersionContentSchema>

/** A sensible starting point for a new specification (ATR, 4000–650 cm⁻¹, 4 cm⁻¹, 32 scans). */
export function emptyVersionContent(): SpecVersionContent {
	return {
		scope: '',
		method: { technique: 'ATR', rangeFrom: 650, rangeTo: 4000, resolution: 4, scans: 32, samplePreparation: '' },
		referenceSpectrumId: null,
		criteria: {
			// 0.95: the lowest correlation threshold regulatory NIR guidance accepts without justification
			// (FACTS.md §2.3, READ-2°); authors should justify their own from data.
			minCorrelation: 0.95,
			minDerivativeCorrelation: null,
			defaultBandTolerance: null,
			exclusionRegions: [{ from: 2280, to: 2400, label: 'Atmospheric CO₂' }],
			thresholdJustification: '',
		},
		bands: [],
		notes: '',
	}
}

/** The engine's acceptance criteria for a version's content. */
export function toAcceptanceCriteria(content: SpecVersionContent): AcceptanceCriteriaInput {
	return {
		minCorrelation: content.criteria.minCorrelation,
		minDerivativeCorrelation: content.criteria.minDerivativeCorrelation,
		defaultBandTolerance: content.criteria.defaultBandTolerance,
		exclusionRegions: content.criteria.exclusionRegions,
		range: { from: content.method.rangeFrom, to: content.method.rangeTo },
		bands: content.bands.map((row) => ({
			position: row.position,
			tolerance: row.tolerance ?? undefined,
			assignment: row.assignment,
			intensityClass: row.intensityClass,
			shape: row.shape,
			required: row.required,
		})),
	}
}
