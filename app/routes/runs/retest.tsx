import { getFormProps, getSelectProps, getTextareaProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { data, Form, Link, useNavigation } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/retest'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getRun } from '#app/.server/queries/runs.ts'
import { recordIdentityRun, refusalLines } from '#app/.server/services/identity-runs.ts'
import { listInstruments } from '#app/.server/services/instruments.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { readRunUpload } from '#app/.server/uploads.ts'
import { CautionNote } from '#app/components/caution-note.tsx'
import { ContainerFilesField } from '#app/components/container-files-field.tsx'
import { FormErrors, SelectField, TextareaField } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { RetestFormSchema } from '#shared/runs/forms.ts'
import { retestPermitted } from '#shared/runs/run-rules.ts'

async function originalRun(params: { runId: string }) {
	const parsed = z.uuid().safeParse(params.runId)
	const found = parsed.success ? await getRun(db, parsed.data) : null
	if (!found) throw data({ message: 'This run does not exist, or its address is wrong.' }, { status: 404 })
	return found
}

export async function loader({ context, params }: Route.LoaderArgs) {
	authorize(context, 'run:record')
	const found = await originalRun(params)
	const allowed = retestPermitted(found.snapshot)
	if (!allowed.ok) throw data({ message: allowed.error.message }, { status: allowed.error.status })
	const instruments = await listInstruments(db, new Date())
	return {
		run: found.run,
		lot: found.lot,
		material: found.material,
		instruments: instruments
			.filter(({ instrument }) => !instrument.retiredAt)
			.map(({ instrument, readiness }) => ({
				id: instrument.id,
				label: readiness.usable ? `${instrument.code} · ${instrument.name}` : `${instrument.code} (not usable)`,
				usable: readiness.usable,
			})),
	}
}

export async function action({ request, context, params }: Route.ActionArgs) {
	const actor = authorize(context, 'run:record')
	const found = await originalRun(params)
	const { formData, files, overrides } = await readRunUpload(request)
	const submission = parseWithZod(formData, { schema: RetestFormSchema })
	if (submission.status !== 'success') return data({ result: submission.reply() }, { status: 400 })
	if (files.length === 0) {
		return data(
			{ result: submission.reply({ formErrors: ['Choose the new sample spectra, one file per container.'] }) },
			{ status: 400 },
		)
	}
	const outcome = await recordIdentityRun(db, {
		kind: 'retest',
		actor,
		retestOfId: found.run.id,
		reason: submission.value.retestReason,
		instrumentId: submission.value.instrumentId,
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
	return redirectWithToast(`/runs/${outcome.value.runId}`, {
		kind: outcome.value.outcome === 'conforms' ? 'success' : 'error',
		title: `Retest ${outcome.value.runNumber} recorded`,
		description: `Linked to ${found.run.runNumber}, which stays on record.`,
	})
}

export default function Retest({ loaderData, actionData }: Route.ComponentProps) {
	const { run, lot, material, instruments } = loaderData
	const navigation = useNavigation()
	const [form, fields] = useForm({
		lastResult: actionData?.result,
		onValidate: ({ formData }) => parseWithZod(formData, { schema: RetestFormSchema }),
		shouldValidate: 'onBlur',
		shouldRevalidate: 'onInput',
	})
	return (
		<>
			<PageHeader
				title={`Retest of ${run.runNumber}`}
				description={`Lot ${lot.lotNumber} of ${material.name}, ${lot.containerCount} containers. The retest is a new run linked to ${run.runNumber}; the flagged run is kept as it is.`}
				actions={
					<Link to={`/runs/${run.id}`} className={buttonVariants({ variant: 'secondary' })}>
						Cancel
					</Link>
				}
			/>
			<Form
				method="post"
				encType="multipart/form-data"
				{...getFormProps(form)}
				className="bg-sheet border-rule max-w-4xl space-y-5 rounded-lg border p-6"
			>
				<FormErrors id={form.errorId} errors={form.errors} />
				<TextareaField
					label="Reason for the retest"
					hint="As your investigation procedure allows it, e.g. the laboratory error found"
					errors={fields.retestReason.errors}
					textareaProps={getTextareaProps(fields.retestReason)}
				/>
				<SelectField
					label="Instrument"
					errors={fields.instrumentId.errors}
					selectProps={getSelectProps(fields.instrumentId)}
					placeholder="Choose…"
					options={instruments.map((instrument) => ({
						value: instrument.id,
						label: instrument.label,
						disabled: !instrument.usable,
					}))}
				/>
				<ContainerFilesField containerCount={lot.containerCount} />
				<Button type="submit" disabled={navigation.state === 'submitting'}>
					{navigation.state === 'submitting' ? 'Comparing every container…' : 'Record the retest'}
				</Button>
			</Form>
			<CautionNote className="mt-6 max-w-4xl" />
		</>
	)
}

export function meta() {
	return [{ title: 'Retest · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
