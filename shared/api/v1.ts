/**
 * The schemas of REST API v1: the routes parse with them and the OpenAPI document is generated from them
 * (app/.server/openapi.ts), so the two cannot drift apart. Pure zod, no I/O.
 */
import { z } from 'zod'
import { VERSION_STATE_LABELS, type VersionState } from '#shared/specs/state-labels.ts'
import { BandRowSchema, SpecVersionContentSchema } from '#shared/specs/version-content.ts'

const VERSION_STATES = Object.keys(VERSION_STATE_LABELS) as [VersionState, ...Array<VersionState>]

export const PageQuerySchema = z.object({
	page: z.coerce.number().int().min(1).max(100_000).default(1).describe('1-based page number'),
	pageSize: z.coerce.number().int().min(1).max(100).default(25).describe('Items per page, at most 100'),
})
export type PageQuery = z.infer<typeof PageQuerySchema>

function pageOf<T extends z.ZodType>(item: T) {
	return z.object({
		items: z.array(item),
		page: z.number().int(),
		pageSize: z.number().int(),
		total: z.number().int().describe('Items over all pages'),
	})
}

const Timestamp = z.iso.datetime()

export const MaterialSchema = z.object({
	id: z.uuid(),
	code: z.string(),
	name: z.string(),
	casNumber: z.string().nullable(),
	formula: z.string().nullable(),
	grade: z.string().nullable(),
})
export const MaterialPageSchema = pageOf(MaterialSchema)

export const SpecificationSchema = z.object({
	id: z.uuid(),
	documentNumber: z.string(),
	title: z.string(),
	materialId: z.uuid(),
	materialName: z.string(),
})
export const SpecificationPageSchema = pageOf(SpecificationSchema)

export const VersionSummarySchema = z.object({
	id: z.uuid(),
	versionNumber: z.number().int(),
	state: z.enum(VERSION_STATES),
	effectiveAt: Timestamp.nullable(),
})

export const SpecificationDetailSchema = SpecificationSchema.extend({
	effectiveVersionId: z.uuid().nullable(),
	versions: z.array(VersionSummarySchema),
})

export const VersionDetailSchema = VersionSummarySchema.extend({
	specificationId: z.uuid(),
	documentNumber: z.string(),
	content: SpecVersionContentSchema,
})

export const VersionBandsSchema = z.object({ versionId: z.uuid(), bands: z.array(BandRowSchema) })

export const SpectrumUploadFormSchema = z.object({
	file: z.string().describe('The spectrum file: JCAMP-DX (.jdx, .dx) or XY text (.csv, .txt)'),
	purpose: z.enum(['reference', 'sample', 'instrument-check', 'other']).optional(),
	materialId: z.uuid().optional(),
	technique: z.string().optional(),
	instrument: z.string().optional(),
})

export const SpectrumUploadSchema = z.object({
	status: z.enum(['stored', 'duplicate']).describe('"duplicate": the same bytes were already stored'),
	spectrumId: z.uuid(),
	fileName: z.string(),
	points: z.number().int().optional(),
	warnings: z.array(z.string()).optional(),
	message: z.string().optional(),
})

export const CompareRequestSchema = z.object({ sampleSpectrumId: z.uuid() })

export const BandMatchSchema = z.object({
	expected: z.object({
		position: z.number(),
		tolerance: z.number(),
		assignment: z.string(),
		required: z.boolean(),
	}),
	observed: z.number().nullable(),
	shift: z.number().nullable(),
	withinTolerance: z.boolean(),
})

export const CompareResultSchema = z.object({
	specificationId: z.uuid(),
	versionId: z.uuid().describe('The effective version compared against'),
	verdict: z.enum(['conforms', 'does-not-conform', 'inconclusive']),
	correlation: z.number().nullable(),
	derivativeCorrelation: z.number().nullable(),
	reasons: z.array(z.string()),
	bands: z.array(BandMatchSchema),
	algorithmVersion: z.string(),
})

export const ProblemSchema = z.object({
	type: z.string().describe('A URI reference; "about:blank" when the status says it all'),
	title: z.string(),
	status: z.number().int(),
	detail: z.string(),
	errors: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
})
