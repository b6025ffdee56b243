/** Form schemas of instruments, checks and identity runs: one source for Conform in the browser and the server. */
import { z } from 'zod'
import { MIN_RUN_TEXT_LENGTH } from '#shared/runs/run-rules.ts'

/** Most containers one run takes (a large delivery; the bench exercises 100). */
export const MAX_CONTAINERS_PER_RUN = 200

export const CHECK_TABLE_OPTIONS = [
	{ id: 'ph-eur-ft', label: 'Ph. Eur. 2.2.24, FT instruments (±1.0 cm⁻¹)' },
	{ id: 'ph-eur-monochromator', label: 'Ph. Eur. 2.2.24, monochromator instruments' },
	{ id: 'jp', label: 'JP, infrared spectrophotometry' },
] as const

const optionalText = (max: number) =>
	z
		.string()
		.trim()
		.max(max)
		.optional()
		.transform((value) => value || null)

export const InstrumentFormSchema = z.object({
	code: z
		.string({ message: 'Give the instrument its asset code' })
		.trim()
		.min(2, 'At least 2 characters')
		.max(40)
		.regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, 'Letters, digits, dot, dash and underscore only'),
	name: z.string({ message: 'Name the instrument' }).trim().min(2, 'At least 2 characters').max(200),
	serialNumber: optionalText(100),
	location: optionalText(200),
	checkValidityDays: z.coerce
		.number({ message: 'A whole number of days' })
		.int('A whole number of days')
		.min(1, 'At least one day')
		.max(366, 'At most a year'),
	checkTable: z.enum(['ph-eur-ft', 'ph-eur-monochromator', 'jp'], { message: 'Choose the band table' }),
})
export type InstrumentFormValues = z.output<typeof InstrumentFormSchema>

export const InstrumentCheckFormSchema = z.object({
	notes: optionalText(2000),
})

export const LotRunFormSchema = z.object({
	specificationId: z.uuid({ message: 'Choose the specification' }),
	lotNumber: z.string({ message: 'Give the lot number' }).trim().min(1, 'Give the lot number').max(80),
	supplier: z.string({ message: 'Name the supplier' }).trim().min(2, 'Name the supplier').max(200),
	containerCount: z.coerce
		.number({ message: 'A whole number of containers' })
		.int('A whole number of containers')
		.min(1, 'At least one container')
		.max(MAX_CONTAINERS_PER_RUN, `At most ${MAX_CONTAINERS_PER_RUN} containers per run`),
	receivedOn: z.iso
		.date({ message: 'Use a date like 2026-11-30' })
		.optional()
		.transform((value) => value ?? null),
	instrumentId: z.uuid({ message: 'Choose the instrument' }),
})
export type LotRunFormValues = z.output<typeof LotRunFormSchema>

export const RetestFormSchema = z.object({
	instrumentId: z.uuid({ message: 'Choose the instrument' }),
	retestReason: z
		.string({ message: 'Give the reason for the retest' })
		.trim()
		.min(MIN_RUN_TEXT_LENGTH, `At least ${MIN_RUN_TEXT_LENGTH} characters`)
		.max(2000),
})

export const RunSignFormSchema = z.object({
	intent: z.enum(['sign-performed', 'verify']),
	password: z.string({ message: 'Type your password to sign' }).min(1, 'Type your password to sign').max(200),
})

export const InvestigationFormSchema = z.object({
	intent: z.literal('close-investigation'),
	conclusion: z.enum(['confirmed', 'invalidated'], { message: 'Choose the conclusion' }),
	summary: z
		.string({ message: 'Summarise the investigation' })
		.trim()
		.min(MIN_RUN_TEXT_LENGTH, `At least ${MIN_RUN_TEXT_LENGTH} characters`)
		.max(4000),
	password: z.string({ message: 'Type your password to sign' }).min(1, 'Type your password to sign').max(200),
})
