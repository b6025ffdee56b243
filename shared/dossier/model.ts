/**
 * Everything a controlled dossier shows, already resolved to plain values (names, not ids; formatted local times,
 * not time-zone rules). The renderers and templates read nothing else: no database, no clock. `renderedAt` is given
 * by the caller so that the same data renders to the same bytes.
 *
 * Optional facts are `null` (known absent) rather than missing, so that templates compiled in strict mode can tell a
 * typo in a template from an absent value.
 */
import { z } from 'zod'

/** Version states of document control; the same words as the database's `VERSION_STATES`. */
export const DOSSIER_VERSION_STATES = ['draft', 'in_review', 'approved', 'effective', 'superseded', 'retired'] as const
export type DossierVersionState = (typeof DOSSIER_VERSION_STATES)[number]

export const SIGNATURE_MEANINGS = ['authored', 'reviewed', 'approved'] as const
export const EVIDENCE_KINDS = ['comparison', 'specificity', 'instrument-check'] as const
export const EVIDENCE_VERDICTS = ['conforms', 'does-not-conform', 'inconclusive', 'passed', 'failed'] as const

/** Most points a figure series may carry; callers thin with `thinForFigure`. */
export const MAX_FIGURE_POINTS = 2000

const Sha256Schema = z.string().regex(/^[0-9a-f]{64}$/, 'a SHA-256 as 64 lowercase hex digits')
const IsoDateTimeSchema = z.iso.datetime({ offset: true })
const IsoDateSchema = z.iso.date()
const Text = (max: number) => z.string().trim().max(max)

/** One point of a figure series: [x in cm⁻¹, y in the series' ordinate unit]. Any x order. */
export const FigurePointSchema = z.tuple([z.number().finite(), z.number().finite()])
export type FigurePoint = z.infer<typeof FigurePointSchema>
const SeriesSchema = z.array(FigurePointSchema).min(2).max(MAX_FIGURE_POINTS)

export const DossierSignatureSchema = z.object({
	printedName: Text(200).min(1),
	meaning: z.enum(SIGNATURE_MEANINGS),
	/** The instant of signing, ISO 8601 with offset (normally `Z`). */
	signedAtUtc: IsoDateTimeSchema,
	/** IANA zone of the signer, e.g. 'Europe/London'. */
	signerTimeZone: Text(64).min(1),
	/** The signing time as the signer saw it, already formatted with its zone, e.g. '2025-03-14 10:42 GMT'. */
	localTime: Text(100).min(1),
	/** SHA-256 of the canonical content this signature is bound to. */
	contentSha256: Sha256Schema,
})
export type DossierSignature = z.infer<typeof DossierSignatureSchema>

export const DossierBandSchema = z.object({
	/** Expected band maximum, cm⁻¹. */
	position: z.number().finite().min(100).max(15000),
	/** ± cm⁻¹, already resolved from the row, the version default or 0.5 % of the position. */
	tolerance: z.number().finite().positive().max(200),
	assignment: Text(300),
	intensityClass: z.enum(['vs', 's', 'm', 'w', 'vw', 'v']),
	shape: z.enum(['sharp', 'broad']),
	required: z.boolean(),
})
export type DossierBand = z.infer<typeof DossierBandSchema>

export const DossierRegionSchema = z.object({
	/** cm⁻¹ */
	from: z.number().finite().min(0).max(15000),
	/** cm⁻¹ */
	to: z.number().finite().min(0).max(15000),
	label: Text(200).nullable().default(null),
})

export const DossierBodySchema = z.object({
	scope: Text(5000),
	method: z.object({
		technique: Text(100).min(1),
		/** cm⁻¹ */
		rangeFrom: z.number().finite(),
		/** cm⁻¹ */
		rangeTo: z.number().finite(),
		/** cm⁻¹ */
		resolution: z.number().finite().positive(),
		scans: z.number().int().positive(),
		samplePreparation: Text(5000),
	}),
	criteria: z.object({
		minCorrelation: z.number().min(-1).max(1),
		minDerivativeCorrelation: z.number().min(-1).max(1).nullable().default(null),
		/** ± cm⁻¹ for rows without their own; null = 0.5 % of each position. */
		defaultBandTolerance: z.number().finite().positive().nullable().default(null),
		exclusionRegions: z.array(DossierRegionSchema).max(50),
		thresholdJustification: Text(5000),
	}),
	notes: Text(10_000),
})

export const ReferenceSpectrumSchema = z.object({
	fileName: Text(300).min(1),
	sha256: Sha256Schema,
	/** Thinned for the figure (see `thinForFigure`); x in cm⁻¹. */
	points: SeriesSchema,
	yLabel: z.literal('Absorbance'),
	/** Markers drawn on the figure: position in cm⁻¹ and a short label. */
	bands: z.array(z.object({ position: z.number().finite(), label: Text(40) })).max(200),
})

export const EvidenceSchema = z.object({
	kind: z.enum(EVIDENCE_KINDS),
	title: Text(300).min(1),
	verdict: z.enum(EVIDENCE_VERDICTS),
	/** Every number behind the verdict, already formatted, e.g. { label: 'Pearson correlation', value: '0.9981' }. */
	numbers: z.array(z.object({ label: Text(200).min(1), value: Text(200) })).max(50),
	reasons: z.array(Text(1000)).max(50),
	overlay: z.object({ reference: SeriesSchema, sample: SeriesSchema }).nullable().default(null),
})
export type DossierEvidence = z.infer<typeof EvidenceSchema>

export const RevisionSchema = z.object({
	versionNumber: z.number().int().positive(),
	state: z.enum(DOSSIER_VERSION_STATES),
	effectiveFrom: IsoDateSchema.nullable().default(null),
	/** Null only for the first version. */
	changeReason: Text(2000).nullable().default(null),
	/** Changes against the previous version, one line each (from the tracked diff). */
	summary: z.array(Text(1000)).max(200),
})

export const AuditEntrySchema = z.object({
	at: IsoDateTimeSchema,
	actor: Text(200).min(1),
	action: Text(100).min(1),
	detail: Text(1000),
})

/**
 * One verified identity run that tested against the version, as the dossier's appendix lists it. The run's full
 * record is its own PDF (shared/runs/record-document.ts); the appendix names it by its record SHA-256.
 */
export const DossierRunSchema = z.object({
	runNumber: Text(40).min(1),
	lotNumber: Text(100).min(1),
	supplier: Text(200).min(1),
	containerCount: z.number().int().positive(),
	instrumentCode: Text(40).min(1),
	recordedAt: IsoDateTimeSchema,
	outcome: z.enum(['conforms', 'flagged']),
	investigationConclusion: z.enum(['confirmed', 'invalidated']).nullable(),
	/** Lowest container correlation as stored, or null when no container had one. */
	lowestCorrelation: z.number().min(-1).max(1).nullable(),
	/** Numbers of the containers that did not give a clear 'conforms'. */
	notConforming: z.array(z.number().int().positive()).max(500),
	verifiedBy: Text(200).min(1),
	verifiedAtUtc: IsoDateTimeSchema,
	/** Run number of the flagged run this one retests, or null. */
	retestOf: Text(40).nullable(),
	recordSha256: Sha256Schema,
})
export type DossierRun = z.infer<typeof DossierRunSchema>

export const DossierDataSchema = z.object({
	organisation: z.object({ name: Text(200).min(1), site: Text(200).nullable().default(null) }),
	document: z.object({
		number: Text(64).min(1),
		title: Text(300).min(1),
		material: z.object({ code: Text(64).min(1), name: Text(300).min(1), casNumber: Text(20).nullable().default(null) }),
	}),
	version: z.object({
		number: z.number().int().positive(),
		state: z.enum(DOSSIER_VERSION_STATES),
		effectiveFrom: IsoDateSchema.nullable().default(null),
		changeReason: Text(2000).nullable().default(null),
	}),
	controlledCopy: z.object({
		number: Text(64).nullable(),
		issuedTo: Text(300).nullable(),
		notice: z.enum(['controlled', 'uncontrolled']),
		/** e.g. 'Issued to A. Inspector (MHRA) on 2025-06-02 for inspection; read-only access until 2025-06-30'. */
		inspectionLine: Text(500).nullable().default(null),
	}),
	signatures: z.array(DossierSignatureSchema).max(20),
	body: DossierBodySchema,
	referenceSpectrum: ReferenceSpectrumSchema.nullable(),
	bands: z.array(DossierBandSchema).max(500),
	evidence: z.array(EvidenceSchema).max(100),
	revisionHistory: z.array(RevisionSchema).max(200),
	auditExtract: z.array(AuditEntrySchema).max(2000),
	/** SHA-256 of the version's canonical content: what the signatures sign. */
	contentSha256: Sha256Schema,
	verification: z.object({
		/** Where a reader checks a copy, e.g. 'https://bandproof.calder-vale.example/verify'; null when offline only. */
		url: Text(500).nullable().default(null),
		/** Site-specific words on how to verify, shown under the template's own wording. */
		instructions: Text(2000),
	}),
	/**
	 * The identity-runs appendix: null for the dossier without it; otherwise the verified runs that tested against
	 * this version (possibly none), oldest first.
	 */
	identityRuns: z.array(DossierRunSchema).max(1000).nullable().default(null),
	/** When the dossier was rendered, ISO 8601 with offset; given by the caller, never read from a clock. */
	renderedAt: IsoDateTimeSchema,
})
export type DossierData = z.infer<typeof DossierDataSchema>
export type DossierDataInput = z.input<typeof DossierDataSchema>

/** True when the version is in force: only then does a dossier go without a DRAFT (or similar) mark. */
export function isEffective(state: DossierVersionState): boolean {
	return state === 'effective'
}

/**
 * Thins a series to at most `maxPoints` for a figure without losing peaks: the points are cut into equal buckets
 * and each bucket keeps its lowest and highest y, in their original order. Pure; keeps the first and last point.
 */
export function thinForFigure(points: ReadonlyArray<FigurePoint>, maxPoints = MAX_FIGURE_POINTS): Array<FigurePoint> {
	if (points.length <= maxPoints) return points.map(([x, y]) => [x, y])
	const inner = points.slice(1, -1)
	const buckets = Math.max(1, Math.floor((maxPoints - 2) / 2))
	const size = inner.length / buckets
	const out: Array<FigurePoint> = [[points[0]![0], points[0]![1]]]
	for (let b = 0; b < buckets; b++) {
		const start = Math.floor(b * size)
		const end = Math.min(inner.length, Math.floor((b + 1) * size))
		if (end <= start) continue
		let lo = start
		let hi = start
		for (let i = start + 1; i < end; i++) {
			if (inner[i]![1] < inner[lo]![1]) lo = i
			if (inner[i]![1] > inner[hi]![1]) hi = i
		}
		for (const i of lo === hi ? [lo] : lo < hi ? [lo, hi] : [hi, lo]) out.push([inner[i]![0], inner[i]![1]])
	}
	const last = points[points.length - 1]!
	out.push([last[0], last[1]])
	return out
}
