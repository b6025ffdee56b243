import { getFormProps, getInputProps, getSelectProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { data, Form, Link, useNavigation } from 'react-router'
import type { Route } from './+types/new'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listTestableSpecifications, recordIdentityRun, refusalLines } from '#app/.server/services/identity-runs.ts'
import { listInstruments } from '#app/.server/services/instruments.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { readRunUpload } from '#app/.server/uploads.ts'
import { CautionNote } from '#app/components/caution-note.tsx'
import { ContainerFilesField } from '#app/components/container-files-field.tsx'
import { Field, FormErrors, SelectField } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { LotRunFormSchema, MAX_CONTAINERS_PER_RUN } from '#shared/runs/forms.ts'

const NOT_USABLE = {
	retired: 'retired',
	'never-checked': 'never checked',
	failed: 'last check failed',
	expired: 'check expired',
} as const

export async function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'run:record')
	const [specifications, instruments] = await Promise.all([
		listTestableSpecifications(db),
		listInstruments(db, new Date()),
	])
	return {
		specifications,
		instruments: instruments
			.filter(({ instrument }) => !instrument.retiredAt)
			.map(({ instrument, readiness }) => ({
				id: instrument.id,
				label: `${instrument.code} · ${instrument.name}`,
				usable: readiness.usable,
				why: readiness.usable ? null : NOT_USABLE[readiness.reason],
			})),
	}
}

export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'run:record')
	const { formData, files, overrides } = await readRunUpload(request)
	const submission = parseWithZod(formData, { schema: LotRunFormSchema })
	if (submission.status !== 'success') return data({ result: submission.reply() }, { status: 400 })
	if (files.length === 0) {
		return data(
			{ result: submission.reply({ formErrors: ['Choose the sample spectra, one file per container.'] }) },
			{ status: 400 },
		)
	}
	const { specificationId, instrumentId, ...lot } = submission.value
	const outcome = await recordIdentityRun(db, {
		kind: 'first',
		actor,
		specificationId,
		lot,
		instrumentId,
		files,
		overrides,
		now: new Date(),
	})
	if (!outcome.ok) {
		return data(
			{ result: submission.reply({ formErrors: refusalLines(outcome.error) }) },
			{ status: outcome.error.status },
		)
	}
	return redirectWithToast(
		`/runs/${outcome.value.runId}`,
		outcome.value.outcome === 'conforms'
			? {
					kind: 'success',
					title: `${outcome.value.runNumber} recorded`,
					description: 'Every container conforms. Sign the run as performed.',
				}
			: {
					kind: 'error',
					title: `${outcome.value.runNumber} flagged for investigation`,
					description:
						'At least one container does not conform or is inconclusive. Sign the run; it goes to investigation.',
				},
	)
}

export default function NewLot({ loaderData, actionData }: Route.ComponentProps) {
	const { specifications, instruments } = loaderData
	const navigation = useNavigation()
	const [form, fields] = useForm({
		lastResult: actionData?.result,
		onValidate: ({ formData }) => parseWithZod(formData, { schema: LotRunFormSchema }),
		shouldValidate: 'onBlur',
		shouldRevalidate: 'onInput',
	})
	const containerCount = Number(fields.containerCount.value ?? '') || null
	const submitting = navigation.state === 'submitting'
	return (
		<>
			<PageHeader
				title="Test a new lot"
				description="Record the lot, choose a checked instrument, and upload one sample spectrum per container. Each container is compared with the reference of the effective specification."
				actions={
					<Link to="/lots" className={buttonVariants({ variant: 'secondary' })}>
						Cancel
					</Link>
				}
			/>
			{specifications.length === 0 ? (
				<p className="border-caution bg-caution-soft mb-6 rounded-md border-l-4 px-4 py-3 text-sm">
					No specification is effective with a reference spectrum yet, so there is nothing to test against.
				</p>
			) : null}
			<Form
				method="post"
				encType="multipart/form-data"
				{...getFormProps(form)}
				className="bg-sheet border-rule max-w-4xl space-y-5 rounded-lg border p-6"
			>
				<FormErrors id={form.errorId} errors={form.errors} />
				<div className="grid gap-5 md:grid-cols-2">
					<SelectField
						label="Specification"
						hint="Only specifications with an effective version are listed"
						errors={fields.specificationId.errors}
						selectProps={getSelectProps(fields.specificationId)}
						placeholder="Choose…"
						options={specifications.map((spec) => ({
							value: spec.id,
							label: `${spec.documentNumber} v${spec.versionNumber} · ${spec.materialName}`,
						}))}
						className="md:col-span-2"
					/>
					<Field
						label="Lot number"
						hint="As on the supplier's label"
						errors={fields.lotNumber.errors}
						inputProps={getInputProps(fields.lotNumber, { type: 'text' })}
					/>
					<Field
						label="Supplier"
						errors={fields.supplier.errors}
						inputProps={getInputProps(fields.supplier, { type: 'text' })}
					/>
					<Field
						label="Number of containers"
						hint={`Every container is sampled and tested (1 to ${MAX_CONTAINERS_PER_RUN})`}
						errors={fields.containerCount.errors}
						inputProps={{ ...getInputProps(fields.containerCount, { type: 'number' }), min: 1 }}
					/>
					<Field
						label="Received on"
						hint="Optional"
						errors={fields.receivedOn.errors}
						inputProps={getInputProps(fields.receivedOn, { type: 'date' })}
					/>
					<SelectField
						label="Instrument"
						hint="An instrument without a valid, passed polystyrene check cannot be used"
						errors={fields.instrumentId.errors}
						selectProps={getSelectProps(fields.instrumentId)}
						placeholder="Choose…"
						options={instruments.map((instrument) => ({
							value: instrument.id,
							label: instrument.usable ? instrument.label : `${instrument.label} (not usable: ${instrument.why})`,
							disabled: !instrument.usable,
						}))}
						className="md:col-span-2"
					/>
				</div>
				<ContainerFilesField containerCount={containerCount} />
				<div className="flex gap-3">
					<Button type="submit" disabled={submitting}>
						{submitting ? 'Comparing every container…' : 'Record and compare'}
					</Button>
				</div>
			</Form>
			<CautionNote className="mt-6 max-w-4xl" />
		</>
	)
}

export function meta() {
	return [{ title: 'Test a new lot · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
