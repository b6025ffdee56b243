import { getFormProps, getInputProps, getTextareaProps, type SubmissionResult, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { Form, Link, useNavigation } from 'react-router'
import { Field, FormErrors, TextareaField } from '#app/components/forms.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { MaterialEditSchema, MaterialFormSchema } from '#shared/materials/material-schema.ts'

type Defaults = {
	code: string
	name: string
	synonyms: string
	casNumber: string
	formula: string
	grade: string
	revision?: number
}

/** The register/edit form for a material. Server refusals come back in `lastResult` with the typed values kept. */
export function MaterialForm({
	lastResult,
	defaultValue,
	submitLabel,
}: {
	lastResult: SubmissionResult | undefined
	defaultValue?: Defaults
	submitLabel: string
}) {
	const navigation = useNavigation()
	const schema = defaultValue?.revision ? MaterialEditSchema : MaterialFormSchema
	const [form, fields] = useForm({
		lastResult,
		defaultValue,
		onValidate: ({ formData }) => parseWithZod(formData, { schema }),
		shouldValidate: 'onBlur',
		shouldRevalidate: 'onInput',
	})
	return (
		<Form
			method="post"
			{...getFormProps(form)}
			className="bg-sheet border-rule max-w-3xl space-y-5 rounded-lg border p-6"
		>
			<FormErrors id={form.errorId} errors={form.errors} />
			{defaultValue?.revision ? <input type="hidden" name="revision" value={defaultValue.revision} /> : null}
			<div className="grid gap-5 md:grid-cols-2">
				<Field
					label="Material code"
					hint="Your lab's item code, e.g. RM-0142"
					errors={fields.code.errors}
					inputProps={getInputProps(fields.code, { type: 'text' })}
				/>
				<Field
					label="CAS Registry Number"
					hint="Optional; the check digit is verified"
					errors={fields.casNumber.errors}
					inputProps={{
						...getInputProps(fields.casNumber, { type: 'text' }),
						inputMode: 'numeric',
						placeholder: 'e.g. 50-78-2',
					}}
				/>
			</div>
			<Field label="Name" errors={fields.name.errors} inputProps={getInputProps(fields.name, { type: 'text' })} />
			<TextareaField
				label="Synonyms"
				hint="One per line, or separated by semicolons"
				errors={fields.synonyms.errors}
				textareaProps={getTextareaProps(fields.synonyms)}
			/>
			<div className="grid gap-5 md:grid-cols-2">
				<Field
					label="Formula"
					errors={fields.formula.errors}
					inputProps={getInputProps(fields.formula, { type: 'text' })}
				/>
				<Field
					label="Grade"
					hint="e.g. Ph. Eur., USP, technical"
					errors={fields.grade.errors}
					inputProps={getInputProps(fields.grade, { type: 'text' })}
				/>
			</div>
			<div className="flex items-center gap-3">
				<Button type="submit" disabled={navigation.state === 'submitting'}>
					{navigation.state === 'submitting' ? 'Saving…' : submitLabel}
				</Button>
				<Link to="/materials" className={buttonVariants({ variant: 'secondary' })}>
					Cancel
				</Link>
			</div>
		</Form>
	)
}
