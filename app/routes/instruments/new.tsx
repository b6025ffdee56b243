import { getFormProps, getInputProps, getSelectProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { data, Form, Link, useNavigation } from 'react-router'
import type { Route } from './+types/new'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { registerInstrument } from '#app/.server/services/instruments.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { Field, FormErrors, SelectField } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { CHECK_TABLE_OPTIONS, InstrumentFormSchema } from '#shared/runs/forms.ts'

export function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'instrument:manage')
	return null
}

export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'instrument:manage')
	const submission = parseWithZod(await request.formData(), { schema: InstrumentFormSchema })
	if (submission.status !== 'success') return data({ result: submission.reply() }, { status: 400 })
	const outcome = await registerInstrument(db, { actor, values: submission.value, now: new Date() })
	if (!outcome.ok) {
		return data(
			{ result: submission.reply({ fieldErrors: { code: [outcome.error.message] } }) },
			{ status: outcome.error.status },
		)
	}
	return redirectWithToast(`/instruments/${outcome.value.id}`, {
		kind: 'success',
		title: 'Instrument registered',
		description: `${submission.value.code}: record a polystyrene check before using it for identity runs.`,
	})
}

export default function NewInstrument({ actionData }: Route.ComponentProps) {
	const navigation = useNavigation()
	const [form, fields] = useForm({
		lastResult: actionData?.result,
		defaultValue: { checkValidityDays: '30', checkTable: 'ph-eur-ft' },
		onValidate: ({ formData }) => parseWithZod(formData, { schema: InstrumentFormSchema }),
		shouldValidate: 'onBlur',
		shouldRevalidate: 'onInput',
	})
	return (
		<>
			<PageHeader
				title="Register an instrument"
				description="A spectrometer used for identity runs. Its polystyrene checks follow the band table chosen here."
			/>
			<Form
				method="post"
				{...getFormProps(form)}
				className="bg-sheet border-rule max-w-3xl space-y-5 rounded-lg border p-6"
			>
				<FormErrors id={form.errorId} errors={form.errors} />
				<div className="grid gap-5 md:grid-cols-2">
					<Field
						label="Asset code"
						hint="Your lab's code, e.g. IR-02"
						errors={fields.code.errors}
						inputProps={getInputProps(fields.code, { type: 'text' })}
					/>
					<Field
						label="Name and model"
						errors={fields.name.errors}
						inputProps={getInputProps(fields.name, { type: 'text' })}
					/>
					<Field
						label="Serial number"
						hint="Optional"
						errors={fields.serialNumber.errors}
						inputProps={getInputProps(fields.serialNumber, { type: 'text' })}
					/>
					<Field
						label="Location"
						hint="Optional, e.g. QC lab 2, bench 4"
						errors={fields.location.errors}
						inputProps={getInputProps(fields.location, { type: 'text' })}
					/>
					<Field
						label="Check valid for (days)"
						hint="How long a passed polystyrene check keeps the instrument usable, as your procedure sets it"
						errors={fields.checkValidityDays.errors}
						inputProps={getInputProps(fields.checkValidityDays, { type: 'number' })}
					/>
					<SelectField
						label="Polystyrene band table"
						errors={fields.checkTable.errors}
						selectProps={getSelectProps(fields.checkTable)}
						options={CHECK_TABLE_OPTIONS.map((option) => ({ value: option.id, label: option.label }))}
					/>
				</div>
				<div className="flex gap-3">
					<Button type="submit" disabled={navigation.state === 'submitting'}>
						Register instrument
					</Button>
					<Link to="/instruments" className={buttonVariants({ variant: 'secondary' })}>
						Cancel
					</Link>
				</div>
			</Form>
		</>
	)
}

export function meta() {
	return [{ title: 'Register an instrument · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
