import { parseWithZod } from '@conform-to/zod/v4'
import { data } from 'react-router'
import type { Route } from './+types/new'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { createMaterial, FieldConflict } from '#app/.server/services/materials.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { MaterialForm } from '#app/components/material-form.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { MaterialFormSchema } from '#shared/materials/material-schema.ts'

export function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'material:edit')
	return null
}

export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'material:edit')
	const submission = parseWithZod(await request.formData(), { schema: MaterialFormSchema })
	if (submission.status !== 'success') return data({ result: submission.reply() }, { status: 400 })
	const outcome = await createMaterial(db, { actor, values: submission.value, now: new Date() })
	if (!outcome.ok) {
		const reply =
			outcome.error instanceof FieldConflict
				? submission.reply({ fieldErrors: { [outcome.error.field]: [outcome.error.message] } })
				: submission.reply({ formErrors: [outcome.error.message] })
		return data({ result: reply }, { status: outcome.error.status })
	}
	return redirectWithToast(`/materials/${outcome.value.id}`, {
		kind: 'success',
		title: 'Material registered',
		description: `${submission.value.code} · ${submission.value.name}`,
	})
}

export default function NewMaterial({ actionData }: Route.ComponentProps) {
	return (
		<>
			<PageHeader
				title="Register a material"
				description="A starting material that your lab identifies by infrared spectroscopy."
			/>
			<MaterialForm lastResult={actionData?.result} submitLabel="Register material" />
		</>
	)
}

export function meta() {
	return [{ title: 'Register a material · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
