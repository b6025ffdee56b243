import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { useState } from 'react'
import { data, Form, Link, useNavigation } from 'react-router'
import type { Route } from './+types/upload'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listMaterialChoices } from '#app/.server/queries/spectra.ts'
import { MAX_SPECTRUM_FILE_BYTES, storeSpectrumFile, type UploadOutcome } from '#app/.server/services/spectra.ts'
import { parseUpload } from '#app/.server/uploads.ts'
import { Field, FormErrors, inputClass, TextareaField } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { cn } from '#app/utils/misc.ts'
import { SPECTRUM_PURPOSE_LABELS, SpectrumMetadataSchema } from '#shared/spectra/spectrum-metadata-schema.ts'

export async function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'spectrum:upload')
	return { materials: await listMaterialChoices(db), maxMegabytes: MAX_SPECTRUM_FILE_BYTES / 1024 / 1024 }
}

// The plain-form path (no JavaScript): every file of the batch in one request, each stored or refused alone.
export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'spectrum:upload')
	const formData = await parseUpload(request)
	const submission = parseWithZod(formData, { schema: SpectrumMetadataSchema })
	if (submission.status !== 'success')
		return data({ result: submission.reply(), outcomes: [] as Array<UploadOutcome> }, { status: 400 })
	const files = formData.getAll('files').filter((value): value is File => value instanceof File && value.size > 0)
	if (files.length === 0) {
		return data(
			{
				result: submission.reply({ formErrors: ['Choose at least one file to upload.'] }),
				outcomes: [] as Array<UploadOutcome>,
			},
			{ status: 400 },
		)
	}
	const outcomes: Array<UploadOutcome> = []
	for (const file of files) {
		outcomes.push(
			await storeSpectrumFile(db, {
				actor,
				fileName: file.name,
				bytes: new Uint8Array(await file.arrayBuffer()),
				metadata: submission.value,
				now: new Date(),
			}),
		)
	}
	return data({ result: submission.reply(), outcomes })
}

type Row = { key: string; fileName: string; state: 'waiting' | 'uploading' | 'done'; outcome?: UploadOutcome }

export default function UploadSpectra({ loaderData, actionData }: Route.ComponentProps) {
	const navigation = useNavigation()
	const [files, setFiles] = useState<Array<File>>([])
	const [rows, setRows] = useState<Array<Row>>([])
	const [running, setRunning] = useState(false)
	const [dragging, setDragging] = useState(false)
	const [form, fields] = useForm({
		lastResult: actionData?.result,
		defaultValue: { purpose: 'reference' },
		onValidate: ({ formData }) => parseWithZod(formData, { schema: SpectrumMetadataSchema }),
		shouldValidate: 'onBlur',
		shouldRevalidate: 'onInput',
		onSubmit(event, { formData, submission }) {
			if (submission?.status !== 'success' || files.length === 0) return
			event.preventDefault()
			void uploadOneByOne(formData)
		},
	})

	async function uploadOneByOne(formData: FormData) {
		setRunning(true)
		const batch = files.map((file, index) => ({
			key: `${index}-${file.name}`,
			fileName: file.name,
			state: 'waiting' as const,
		}))
		setRows(batch)
		for (const [index, file] of files.entries()) {
			setRows((current) => current.map((row, i) => (i === index ? { ...row, state: 'uploading' } : row)))
			const body = new FormData()
			for (const [key, value] of formData.entries()) if (typeof value === 'string') body.append(key, value)
			body.append('file', file)
			let outcome: UploadOutcome
			try {
				const response = await fetch('/spectra/upload-file', { method: 'POST', body })
				const payload: unknown = await response.json().catch(() => null)
				outcome =
					payload && typeof payload === 'object' && 'status' in payload
						? (payload as UploadOutcome)
						: { fileName: file.name, status: 'failed', message: `The server answered ${response.status}.` }
				if (payload && typeof payload === 'object' && 'message' in payload && !('status' in payload)) {
					outcome = {
						fileName: file.name,
						status: 'failed',
						message: String((payload as { message: unknown }).message),
					}
				}
			} catch {
				outcome = {
					fileName: file.name,
					status: 'failed',
					message: 'The connection failed; nothing of this file was stored. Try again.',
				}
			}
			setRows((current) => current.map((row, i) => (i === index ? { ...row, state: 'done', outcome } : row)))
		}
		setFiles([])
		setRunning(false)
	}

	const done = rows.filter((row) => row.state === 'done').length
	const shownOutcomes: Array<UploadOutcome> = rows.length
		? rows.flatMap((row) => (row.outcome ? [row.outcome] : []))
		: (actionData?.outcomes ?? [])
	return (
		<>
			<PageHeader
				title="Upload spectra"
				description={`JCAMP-DX (.jdx, .dx) or XY text (.csv, .txt, .xy), up to ${loaderData.maxMegabytes} MB each. Transmittance is converted to absorbance; the original file is kept unchanged.`}
				actions={
					<Link to="/spectra" className={buttonVariants({ variant: 'secondary' })}>
						Back to the library
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
				<div
					onDragOver={(event) => {
						event.preventDefault()
						setDragging(true)
					}}
					onDragLeave={() => setDragging(false)}
					onDrop={(event) => {
						event.preventDefault()
						setDragging(false)
						setFiles((current) => [...current, ...Array.from(event.dataTransfer.files)])
					}}
					className={cn(
						'rounded-lg border-2 border-dashed p-6 text-center',
						dragging ? 'border-accent bg-accent-soft' : 'border-rule-strong',
					)}
				>
					<p className="text-sm font-medium">Drop spectrum files here, or choose them:</p>
					<label htmlFor="spectrum-files" className="sr-only">
						Spectrum files
					</label>
					<input
						id="spectrum-files"
						type="file"
						name="files"
						multiple
						accept=".jdx,.dx,.jcamp,.csv,.tsv,.txt,.xy,.prn"
						onChange={(event) => setFiles(Array.from(event.currentTarget.files ?? []))}
						className="mt-3 text-sm"
					/>
					{files.length ? (
						<p className="text-ink-soft mt-2 text-sm" data-testid="chosen-files">
							{files.length} {files.length === 1 ? 'file' : 'files'} chosen: {files.map((file) => file.name).join(', ')}
						</p>
					) : null}
				</div>
				<fieldset className="grid gap-5 md:grid-cols-2">
					<legend className="mb-2 text-sm font-semibold">
						About these spectra (applies to every file of the batch)
					</legend>
					<div>
						<label htmlFor={fields.purpose.id} className="mb-1 block text-sm font-medium">
							Purpose
						</label>
						<select {...getSelectProps(fields.purpose)} className={inputClass}>
							{Object.entries(SPECTRUM_PURPOSE_LABELS).map(([value, label]) => (
								<option key={value} value={value}>
									{label}
								</option>
							))}
						</select>
					</div>
					<div>
						<label htmlFor={fields.materialId.id} className="mb-1 block text-sm font-medium">
							Material
						</label>
						<select {...getSelectProps(fields.materialId)} className={inputClass}>
							<option value="">Not linked to a material</option>
							{loaderData.materials.map((material) => (
								<option key={material.id} value={material.id}>
									{material.code} · {material.name}
								</option>
							))}
						</select>
					</div>
					<Field
						label="Technique"
						hint="e.g. ATR (diamond), KBr disc"
						errors={fields.technique.errors}
						inputProps={getInputProps(fields.technique, { type: 'text' })}
					/>
					<Field
						label="Instrument"
						errors={fields.instrument.errors}
						inputProps={getInputProps(fields.instrument, { type: 'text' })}
					/>
					<Field
						label="Resolution (cm⁻¹)"
						errors={fields.resolution.errors}
						inputProps={{ ...getInputProps(fields.resolution, { type: 'text' }), inputMode: 'decimal' }}
					/>
					<Field
						label="Acquisition date"
						errors={fields.acquiredOn.errors}
						inputProps={getInputProps(fields.acquiredOn, { type: 'date' })}
					/>
					<Field
						label="Reference standard"
						hint="Name of the reference substance"
						errors={fields.referenceStandardName.errors}
						inputProps={getInputProps(fields.referenceStandardName, { type: 'text' })}
					/>
					<Field
						label="Reference standard lot"
						errors={fields.referenceStandardLot.errors}
						inputProps={getInputProps(fields.referenceStandardLot, { type: 'text' })}
					/>
				</fieldset>
				<TextareaField label="Notes" errors={fields.notes.errors} textareaProps={getTextareaProps(fields.notes)} />
				<div className="flex items-center gap-4">
					<Button type="submit" disabled={running || navigation.state === 'submitting'}>
						{running ? 'Uploading…' : 'Upload'}
					</Button>
					{rows.length ? (
						<div className="flex flex-1 items-center gap-3" aria-live="polite">
							<progress
								value={done}
								max={rows.length}
								className="accent-accent h-2 w-48"
								aria-label="Upload progress"
							/>
							<span className="text-ink-soft text-sm">
								{done} of {rows.length} files
							</span>
						</div>
					) : null}
				</div>
			</Form>
			{shownOutcomes.length || rows.length ? <UploadResults rows={rows} outcomes={shownOutcomes} /> : null}
		</>
	)
}

function UploadResults({ rows, outcomes }: { rows: Array<Row>; outcomes: Array<UploadOutcome> }) {
	const pending = rows.filter((row) => row.state !== 'done')
	return (
		<section aria-label="Upload results" className="bg-sheet border-rule mt-6 max-w-4xl rounded-lg border">
			<h2 className="border-rule border-b px-4 py-3 text-base font-bold">Results</h2>
			<ul>
				{outcomes.map((outcome, index) => (
					<li
						key={`${outcome.fileName}-${index}`}
						className="border-rule flex items-start gap-3 border-b px-4 py-3 text-sm last:border-0"
					>
						<StatusBadge
							tone={outcome.status === 'stored' ? 'good' : outcome.status === 'duplicate' ? 'neutral' : 'danger'}
						>
							{outcome.status === 'stored' ? 'Stored' : outcome.status === 'duplicate' ? 'Already stored' : 'Refused'}
						</StatusBadge>
						<div className="min-w-0 flex-1">
							<p className="font-medium break-all">{outcome.fileName}</p>
							{outcome.status === 'failed' ? <p className="text-danger">{outcome.message}</p> : null}
							{outcome.status === 'duplicate' ? <p className="text-ink-soft">{outcome.message}</p> : null}
							{outcome.status === 'stored' ? (
								<p className="text-ink-soft">
									{outcome.points} points.
									{outcome.warnings.length ? ` Notes from the import: ${outcome.warnings.join(' ')}` : ''}
								</p>
							) : null}
						</div>
						{outcome.status !== 'failed' ? (
							<Link to={`/spectra/${outcome.spectrumId}`} className="text-accent shrink-0 underline underline-offset-4">
								Open
							</Link>
						) : null}
					</li>
				))}
				{pending.map((row) => (
					<li key={row.key} className="border-rule text-ink-soft flex gap-3 border-b px-4 py-3 text-sm last:border-0">
						<StatusBadge tone="neutral">{row.state === 'uploading' ? 'Uploading' : 'Waiting'}</StatusBadge>
						<span className="break-all">{row.fileName}</span>
					</li>
				))}
			</ul>
		</section>
	)
}

export function meta() {
	return [{ title: 'Upload spectra · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
