import { getFormProps, getInputProps, getSelectProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { data, Form, Link, useNavigation } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/new'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listMaterialChoices } from '#app/.server/queries/spectra.ts'
import { createSpecification, documentNumberPattern } from '#app/.server/services/specifications.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { Field, FieldErrors, FormErrors, inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'

const NewSpecificationSchema = z.object({
	materialId: z
		.string({ message: 'Pick the material this specification identifies' })
		.uuid('Pick the material this specification identifies'),
	title: z
		.string({ message: 'Give the specification a title' })
		.trim()
		.min(5, 'A title has at least 5 characters')
		.max(200),
})

export async function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'spec:create')
	return { materials: await listMaterialChoices(db), pattern: documentNumberPattern() }
}

export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'spec:create')
	const submission = parseWithZod(await request.formData(), { schema: NewSpecificationSchema })
	if (submission.status !== 'success') return data({ result: submission.reply() }, { status: 400 })
	const outcome = await createSpecification(db, { actor, ...submission.value, now: new Date() })
	if (!outcome.ok)
		return data({ result: submission.reply({ formErrors: [outcome.error.message] }) }, { status: outcome.error.status })
	return redirectWithToast(`/specifications/${outcome.value.specificationId}/versions/${outcome.value.versionId}`, {
		kind: 'success',
		title: `${outcome.value.documentNumber} created`,
		description: 'Version 1 is a draft: fill in the method, reference spectrum, band table and criteria.',
	})
}

export default function NewSpecification({ loaderData, actionData }: Route.ComponentProps) {
	const navigation = useNavigation()
	const [form, fields] = useForm({
		lastResult: actionData?.result,
		onValidate: ({ formData }) => parseWithZod(formData, { schema: NewSpecificationSchema }),
		shouldValidate: 'onBlur',
		shouldRevalidate: 'onInput',
	})
	return (
		<>
			<PageHeader
				title="New specification"
				description={`The document number is given from the pattern ${loaderData.pattern} when you create it.`}
			/>
			<Form
				method="post"
				{...getFormProps(form)}
				className="bg-sheet border-rule max-w-2xl space-y-5 rounded-lg border p-6"
			>
				<FormErrors id={form.errorId} errors={form.errors} />
				<div>
					<label htmlFor={fields.materialId.id} className="mb-1 block text-sm font-medium">
						Material
					</label>
					<select
						{...getSelectProps(fields.materialId)}
						className={inputClass}
						aria-invalid={fields.materialId.errors ? true : undefined}
						aria-describedby={fields.materialId.errors ? fields.materialId.errorId : undefined}
					>
						<option value="">Choose a material…</option>
						{loaderData.materials.map((material) => (
							<option key={material.id} value={material.id}>
								{material.code} · {material.name}
							</option>
						))}
					</select>
					<FieldErrors id={fields.materialId.errorId} errors={fields.materialId.errors} />
				</div>
				<Field
					label="Title"
					hint="e.g. Identification of paracetamol by ATR-FTIR"
					errors={fields.title.errors}
					inputProps={getInputProps(fields.title, { type: 'text' })}
				/>
				<div className="flex gap-3">
					<Button type="submit" disabled={navigation.state === 'submitting'}>
						Create specification
					</Button>
					<Link to="/specifications" className={buttonVariants({ variant: 'secondary' })}>
						Cancel
					</Link>
				</div>
			</Form>
		</>
	)
}

export function meta() {
	return [{ title: 'New specification · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
