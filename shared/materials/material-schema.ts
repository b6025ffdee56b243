import { z } from 'zod'
import { casErrorMessage, checkCasNumber } from '#shared/materials/cas.ts'

/** Splits a synonyms box (one per line or separated by semicolons) into a clean list. */
export function parseSynonyms(text: string | undefined): Array<string> {
	if (!text) return []
	const seen = new Set<string>()
	for (const part of text.split(/[\n;]+/)) {
		const synonym = part.trim()
		if (synonym) seen.add(synonym)
	}
	return [...seen]
}

/** The fields a person types to register or edit a material. */
export const MaterialFormSchema = z.object({
	code: z
		.string({ message: 'Enter the material code' })
		.trim()
		.min(2, 'A material code has at least 2 characters')
		.max(40, 'A material code has at most 40 characters')
		.regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, 'Use letters, digits and . _ / - only (no spaces)'),
	name: z.string({ message: 'Enter the material name' }).trim().min(2, 'Enter the material name').max(200),
	synonyms: z.string().max(2000).optional(),
	casNumber: z
		.string()
		.trim()
		.max(20)
		.optional()
		.superRefine((value, ctx) => {
			if (!value) return
			const check = checkCasNumber(value)
			if (!check.valid) ctx.addIssue({ code: 'custom', message: casErrorMessage(check) })
		}),
	formula: z.string().trim().max(100).optional(),
	grade: z.string().trim().max(100).optional(),
})

export type MaterialFormValues = z.infer<typeof MaterialFormSchema>

/** The edit form also names the revision it was loaded at, for optimistic locking. */
export const MaterialEditSchema = MaterialFormSchema.extend({ revision: z.coerce.number().int().positive() })
