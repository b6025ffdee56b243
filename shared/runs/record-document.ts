/**
 * Everything the PDF record of one identity run shows, already resolved to plain values (names, not ids; formatted
 * local times, not time-zone rules), zod-validated before the controlled template `templates/run-record/` sees it.
 * Like the dossier's data (shared/dossier/model.ts), it holds no clock: `renderedAt` is given by the caller.
 *
 * Numbers stay numbers: the template prints them with fixed decimals (correlations to 4), so what is printed is the
 * stored value rounded, never a second computation.
 */
import { z } from 'zod'
import { FigurePointSchema, MAX_FIGURE_POINTS } from '#shared/dossier/model.ts'

export const RECORD_RUN_STATES = ['recorded', 'performed', 'verified'] as const
export const RECORD_VERDICTS = ['conforms', 'does-not-conform', 'inconclusive'] as const

const Sha256Schema = z.string().regex(/^[0-9a-f]{64}$/, 'a SHA-256 as 64 lowercase hex digits')
const IsoDateTimeSchema = z.iso.datetime({ offset: true })
const IsoDateSchema = z.iso.date()
const Text = (max: number) => z.string().trim().max(max)
const Correlation = z.number().min(-1).max(1).nullable()
const SeriesSchema = z.array(FigurePointSchema).min(2).max(MAX_FIGURE_POINTS)

export const RecordBandSchema = z.object({
	/** Expected band maximum from the band table, cm⁻¹. */
	position: z.number().finite(),
	/** ± cm⁻¹ as the engine applied it. */
	tolerance: z.number().finite().positive(),
	assignment: Text(300),
	required: z.boolean(),
	/** Sample peak found within the tolerance, cm⁻¹, or null. */
	observed: z.number().finite().nullable(),
	/** observed − expected, cm⁻¹, or null. */
	shift: z.number().finite().nullable(),
	withinTolerance: z.boolean(),
})

export const RecordContainerSchema = z.object({
	number: z.number().int().positive(),
	fileName: Text(300).min(1),
	/** SHA-256 of the sample file as uploaded. */
	sampleSha256: Sha256Schema,
	verdict: z.enum(RECORD_VERDICTS),
	/** Pearson correlation with the reference as stored, or null when undefined. */
	correlation: Correlation,
	derivativeCorrelation: Correlation,
	reasons: z.array(Text(1000)).max(50),
	bands: z.array(RecordBandSchema).max(500),
	/** The sample spectrum over the compared range, thinned for the figure; null when it could not be loaded. */
	overlay: SeriesSchema.nullable(),
})
export type RecordContainer = z.infer<typeof RecordContainerSchema>

export const RecordSignatureSchema = z.object({
	printedName: Text(200).min(1),
	meaning: z.enum(['performed', 'verified']),
	signedAtUtc: IsoDateTimeSchema,
	signerTimeZone: Text(64).min(1),
	/** The signing time as the signer saw it, formatted with its zone. */
	localTime: Text(100).min(1),
	/** The statement the signer agreed to, as stored with the signature. */
	statement: Text(2000).min(1),
	recordSha256: Sha256Schema,
})

export const RunRecordDocumentSchema = z.object({
	organisation: z.object({ name: Text(200).min(1), site: Text(200).nullable().default(null) }),
	run: z.object({
		number: Text(40).min(1),
		state: z.enum(RECORD_RUN_STATES),
		outcome: z.enum(['conforms', 'flagged']),
		recordedAt: IsoDateTimeSchema,
		recordedBy: Text(200).min(1),
	}),
	material: z.object({ code: Text(64).min(1), name: Text(300).min(1) }),
	lot: z.object({
		number: Text(100).min(1),
		supplier: Text(200).min(1),
		containerCount: z.number().int().positive(),
		receivedOn: IsoDateSchema.nullable(),
	}),
	specification: z.object({
		documentNumber: Text(64).min(1),
		title: Text(300).min(1),
		versionNumber: z.number().int().positive(),
		/** SHA-256 of the version's canonical content, the one its approval signatures sign. */
		contentSha256: Sha256Schema.nullable(),
	}),
	criteria: z.object({
		minCorrelation: z.number().min(-1).max(1),
		minDerivativeCorrelation: z.number().min(-1).max(1).nullable(),
	}),
	instrument: z.object({
		code: Text(40).min(1),
		name: Text(200).min(1),
		check: z.object({
			performedAt: IsoDateTimeSchema,
			validUntil: IsoDateTimeSchema,
			passed: z.boolean(),
			/** The pharmacopoeial table the check applied, in words. */
			table: Text(200).min(1),
			/** Largest absolute band deviation found, cm⁻¹, or null when no band was located. */
			worstDeviation: z.number().finite().nullable(),
		}),
	}),
	retestOf: z.object({ runNumber: Text(40).min(1), reason: Text(2000) }).nullable(),
	retestedBy: z.array(z.object({ runNumber: Text(40).min(1), outcome: z.enum(['conforms', 'flagged']) })).max(50),
	/** Null unless the run is flagged; `conclusion` null while the investigation is open. */
	investigation: z
		.object({
			conclusion: z.enum(['confirmed', 'invalidated']).nullable(),
			summary: Text(5000).nullable(),
			closedBy: Text(200).nullable(),
			closedAt: IsoDateTimeSchema.nullable(),
		})
		.nullable(),
	reference: z.object({ fileName: Text(300).min(1), sha256: Sha256Schema, points: SeriesSchema }).nullable(),
	exclusionRegions: z
		.array(z.object({ from: z.number().finite(), to: z.number().finite(), label: Text(200).nullable() }))
		.max(50),
	containers: z.array(RecordContainerSchema).min(1).max(500),
	/** The engine versions that made the container verdicts (one, unless the engine changed mid-run). */
	engineVersions: z.array(Text(40).min(1)).min(1).max(10),
	signatures: z.array(RecordSignatureSchema).max(2),
	/** SHA-256 of the run's canonical record: what both signatures cover. */
	recordSha256: Sha256Schema,
	renderedAt: IsoDateTimeSchema,
})
export type RunRecordDocument = z.infer<typeof RunRecordDocumentSchema>
export type RunRecordDocumentInput = z.input<typeof RunRecordDocumentSchema>
