/**
 * The draft editor's form: flat fields as a browser sends them, turned into SpecVersionContent. Pure, so
 * the browser validates with the same rules as the server.
 */
import { z } from 'zod'
import { BandRowSchema, TECHNIQUES, type SpecVersionContent } from '#shared/specs/version-content.ts'

const number = (message: string) => z.coerce.number({ message }).refine(Number.isFinite, message)

const optionalNumber = (message: string) =>
	z.preprocess(
		(value) => (value === '' || value === undefined || value === null ? null : value),
		z.coerce.number({ message }).nullable(),
	)

/** "2400-2280 CO₂" per line → regions; either order; the label is optional. */
export function parseRegions(text: string | undefined): Array<{ from: number; to: number; label?: string }> | string {
	const regions: Array<{ from: number; to: number; label?: string }> = []
	for (const [index, raw] of (text ?? '').split('\n').entries()) {
		const line = raw.trim()
		if (!line) continue
		const match = /^(\d+(?:[.,]\d+)?)\s*[-–]\s*(\d+(?:[.,]\d+)?)\s*(.*)$/.exec(line)
		if (!match)
			return `Line ${index + 1}: write a region as two wavenumbers and an optional label, e.g. "2400-2280 atmospheric CO₂"`
		const a = Number(match[1]!.replace(',', '.'))
		const b = Number(match[2]!.replace(',', '.'))
		if (a === b) return `Line ${index + 1}: the two ends of a region must differ`
		regions.push({ from: Math.min(a, b), to: Math.max(a, b), ...(match[3] ? { label: match[3].trim() } : {}) })
	}
	return regions
}

export function formatRegions(regions: ReadonlyArray<{ from: number; to: number; label?: string }>): string {
	return regions.map((region) => `${region.to}-${region.from}${region.label ? ` ${region.label}` : ''}`).join('\n')
}

const BandsField = z.preprocess(
	(value) => {
		if (typeof value !== 'string' || value.trim() === '') return []
		try {
			return JSON.parse(value) as unknown
		} catch {
			return value
		}
	},
	z
		.array(BandRowSchema, { message: 'The band table could not be read; reload the page.' })
		.max(200, 'At most 200 bands'),
)

export const VersionFormSchema = z
	.object({
		revision: z.coerce.number().int().positive(),
		scope: z.string().trim().max(5000).default(''),
		technique: z.enum(TECHNIQUES, { message: 'Pick a technique' }),
		rangeFrom: number('Enter the low end of the range in cm⁻¹').pipe(
			z.number().min(100, 'At least 100 cm⁻¹').max(15000),
		),
		rangeTo: number('Enter the high end of the range in cm⁻¹').pipe(
			z.number().min(100).max(15000, 'At most 15000 cm⁻¹'),
		),
		resolution: number('Enter the resolution in cm⁻¹').pipe(
			z.number().positive('The resolution must be positive').max(64),
		),
		scans: number('Enter the number of scans').pipe(z.number().int('Scans are a whole number').min(1).max(10000)),
		samplePreparation: z.string().trim().max(5000).default(''),
		referenceSpectrumId: z
			.string()
			.uuid('Pick a reference spectrum from the library')
			.optional()
			.transform((value) => value ?? null),
		minCorrelation: number('Enter the minimum correlation, e.g. 0.98').pipe(
			z.number().min(0, 'Between 0 and 1').max(1, 'Between 0 and 1'),
		),
		minDerivativeCorrelation: optionalNumber('Enter a number between 0 and 1, or leave it empty').pipe(
			z.number().min(0, 'Between 0 and 1').max(1, 'Between 0 and 1').nullable(),
		),
		defaultBandTolerance: optionalNumber(
			'Enter a tolerance in cm⁻¹, or leave it empty for 0.5 % of each position',
		).pipe(z.number().positive('The tolerance must be positive').max(200).nullable()),
		exclusionRegions: z.string().max(2000).default(''),
		thresholdJustification: z.string().trim().max(5000).default(''),
		notes: z.string().trim().max(10000).default(''),
		changeReason: z.string().trim().max(2000).optional(),
		bands: BandsField,
	})
	.superRefine((value, ctx) => {
		if (value.rangeFrom >= value.rangeTo) {
			ctx.addIssue({ code: 'custom', path: ['rangeFrom'], message: 'The low end must be below the high end' })
		}
		const regions = parseRegions(value.exclusionRegions)
		if (typeof regions === 'string') ctx.addIssue({ code: 'custom', path: ['exclusionRegions'], message: regions })
	})
export type VersionFormValues = z.output<typeof VersionFormSchema>

/** The form's values as version content (the form has been validated, so regions parse). */
export function contentFromForm(values: VersionFormValues): SpecVersionContent {
	const regions = parseRegions(values.exclusionRegions)
	return {
		scope: values.scope,
		method: {
			technique: values.technique,
			rangeFrom: values.rangeFrom,
			rangeTo: values.rangeTo,
			resolution: values.resolution,
			scans: values.scans,
			samplePreparation: values.samplePreparation,
		},
		referenceSpectrumId: values.referenceSpectrumId,
		criteria: {
			minCorrelation: values.minCorrelation,
			minDerivativeCorrelation: values.minDerivativeCorrelation,
			defaultBandTolerance: values.defaultBandTolerance,
			exclusionRegions: typeof regions === 'string' ? [] : regions,
			thresholdJustification: values.thresholdJustification,
		},
		bands: values.bands,
		notes: values.notes,
	}
}

/** The form's default values for a stored version. */
export function formFromContent(content: SpecVersionContent, revision: number, changeReason: string | null) {
	return {
		revision: String(revision),
		scope: content.scope,
		technique: content.method.technique,
		rangeFrom: String(content.method.rangeFrom),
		rangeTo: String(content.method.rangeTo),
		resolution: String(content.method.resolution),
		scans: String(content.method.scans),
		samplePreparation: content.method.samplePreparation,
		referenceSpectrumId: content.referenceSpectrumId ?? '',
		minCorrelation: String(content.criteria.minCorrelation),
		minDerivativeCorrelation:
			content.criteria.minDerivativeCorrelation === null ? '' : String(content.criteria.minDerivativeCorrelation),
		defaultBandTolerance:
			content.criteria.defaultBandTolerance === null ? '' : String(content.criteria.defaultBandTolerance),
		exclusionRegions: formatRegions(content.criteria.exclusionRegions),
		thresholdJustification: content.criteria.thresholdJustification,
		notes: content.notes,
		changeReason: changeReason ?? '',
		bands: JSON.stringify(content.bands),
	}
}
