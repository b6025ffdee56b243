import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { useMemo } from 'react'
import { data, Form, Link, useNavigation } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/$specId.versions.$versionId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getVersionWorkspace, listSpectrumChoices } from '#app/.server/queries/specifications.ts'
import { reauthenticate } from '#app/.server/auth.ts'
import { getWorkflowView } from '#app/.server/queries/workflow.ts'
import {
	acceptRedlineSuggestion,
	addRedline,
	replyToRedline,
	setRedlineStatus,
} from '#app/.server/services/redlines.ts'
import { applyDueEffectiveDates, takeWorkflowStep } from '#app/.server/services/spec-workflow.ts'
import { RedlinePanel } from '#app/components/redline-panel.tsx'
import { SignatureManifest, WorkflowActions } from '#app/components/workflow-panel.tsx'
import type { WorkflowEvent } from '#shared/workflow/spec-version-machine.ts'
import {
	acceptThresholdSuggestion,
	BandTableInvalid,
	recordComparison,
	recordSpecificity,
	saveDraft,
	startNextVersion,
} from '#app/.server/services/specifications.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { BandTableEditor } from '#app/components/band-table-editor.tsx'
import { CautionNote } from '#app/components/caution-note.tsx'
import { DossierPanel } from '#app/components/dossier-panel.tsx'
import { ContentView } from '#app/components/version-content-view.tsx'
import { EvidenceList } from '#app/components/evidence-list.tsx'
import { Field, FormErrors, inputClass, TextareaField } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { SpectrumViewer } from '#app/components/spectrum-viewer.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { VersionStateBadge } from '#app/components/version-state-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { can } from '#shared/authz/permissions.ts'
import type { BandRowProblem } from '#shared/specs/band-table.ts'
import { VERSION_STATE_LABELS } from '#shared/specs/state-labels.ts'
import { TECHNIQUES, type BandRow } from '#shared/specs/version-content.ts'
import { contentFromForm, formFromContent, VersionFormSchema } from '#shared/specs/version-form.ts'

const EvidenceActionSchema = z.discriminatedUnion('intent', [
	z.object({
		intent: z.literal('compare'),
		sampleSpectrumId: z.string({ message: 'Pick the spectrum to compare' }).uuid('Pick the spectrum to compare'),
	}),
	z.object({ intent: z.literal('specificity') }),
	z.object({ intent: z.literal('accept-threshold'), evidenceId: z.string().uuid() }),
	z.object({
		intent: z.literal('new-version'),
		changeReason: z
			.string({ message: 'Say why a new version is needed' })
			.trim()
			.min(10, 'Say why a new version is needed (at least 10 characters)')
			.max(2000),
	}),
])

const WorkflowActionSchema = z.discriminatedUnion('intent', [
	z.object({
		intent: z.literal('workflow'),
		step: z.enum(['submit', 'withdraw', 'reject', 'sign-reviewed', 'sign-approved', 'retire']),
		reason: z.string().trim().max(2000).optional(),
		password: z.string().max(200).optional(),
		effectiveFrom: z.string().max(40).optional(),
		timeZoneOffset: z.coerce.number().int().min(-900).max(900).optional(),
	}),
	z.object({
		intent: z.literal('redline-add'),
		anchor: z.string().min(1).max(80),
		body: z.string({ message: 'Write the comment' }).trim().min(3, 'Write the comment').max(5000),
		suggestedText: z.string().max(10000).optional(),
	}),
	z.object({
		intent: z.literal('redline-reply'),
		redlineId: z.string().uuid(),
		body: z.string({ message: 'Write the reply' }).trim().min(1).max(5000),
	}),
	z.object({ intent: z.enum(['redline-resolve', 'redline-reopen', 'redline-accept']), redlineId: z.string().uuid() }),
])

/** A datetime-local value typed in the browser, with the browser's UTC offset, as an instant. */
function parseLocalDateTime(value: string | undefined, offsetMinutes: number | undefined, now: Date): Date {
	if (!value) return now
	const parsed = Date.parse(`${value}Z`)
	return Number.isNaN(parsed) ? new Date(Number.NaN) : new Date(parsed + (offsetMinutes ?? 0) * 60_000)
}

export async function loader({ context, params, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'spec:read')
	const now = new Date()
	await applyDueEffectiveDates(db, now)
	const workspace = await getVersionWorkspace(db, params.specId, params.versionId)
	if (!workspace) throw data({ message: 'There is no such version of this specification.' }, { status: 404 })
	const canEdit = can(actor, 'spec:edit') && workspace.version.state === 'draft'
	const spectra = can(actor, 'spec:edit') ? await listSpectrumChoices(db) : []
	const workflow = await getWorkflowView(db, params.versionId, actor, now)
	const verify = new URL(request.url).searchParams.get('verify') === '1'
	const isEditor = workspace.version.editorIds.includes(actor.id)
	return {
		...workspace,
		spectra,
		canEdit,
		canStartVersion: can(actor, 'spec:edit'),
		workflow,
		verified: verify,
		canRedline: can(actor, 'spec-version:sign') && workspace.version.state === 'in_review' && !isEditor,
		canAcceptRedline: canEdit,
		canDiscussRedlines:
			(can(actor, 'spec:edit') || can(actor, 'spec-version:sign')) &&
			(workspace.version.state === 'draft' || workspace.version.state === 'in_review'),
	}
}

async function workflowAction(
	request: Request,
	context: Route.ActionArgs['context'],
	versionId: string,
	formData: FormData,
) {
	// The permission goes first, read from the raw intent, so that a role without it gets 403 whatever it sent;
	// each branch below authorises again with the parsed values.
	const intent = String(formData.get('intent') ?? '')
	const step = String(formData.get('step') ?? '')
	authorize(
		context,
		intent === 'workflow'
			? step === 'submit' || step === 'withdraw'
				? 'spec:edit'
				: 'spec-version:sign'
			: intent === 'redline-add'
				? 'spec-version:sign'
				: intent === 'redline-accept'
					? 'spec:edit'
					: 'spec:read',
	)
	const submission = parseWithZod(formData, { schema: WorkflowActionSchema })
	if (submission.status !== 'success')
		return data({ result: submission.reply(), bandProblems: [] as Array<BandRowProblem> }, { status: 400 })
	const value = submission.value
	const now = new Date()
	const fail = (error: { message: string; status: number }) =>
		data(
			{
				result: submission.reply({ formErrors: [error.message], hideFields: ['password'] }),
				bandProblems: [] as Array<BandRowProblem>,
			},
			{ status: error.status },
		)
	if (value.intent === 'workflow') {
		const signing = value.step === 'sign-reviewed' || value.step === 'sign-approved'
		const actor = authorize(
			context,
			value.step === 'submit' || value.step === 'withdraw' ? 'spec:edit' : 'spec-version:sign',
		)
		if (signing) {
			const reauthenticated = await reauthenticate(actor.id, value.password ?? '')
			if (!reauthenticated.ok) return fail(reauthenticated.error)
		}
		const event: WorkflowEvent =
			value.step === 'sign-reviewed'
				? { type: 'sign', meaning: 'reviewed', reauthenticated: true }
				: value.step === 'sign-approved'
					? {
							type: 'sign',
							meaning: 'approved',
							reauthenticated: true,
							effectiveFrom: parseLocalDateTime(value.effectiveFrom, value.timeZoneOffset, now),
						}
					: value.step === 'reject' || value.step === 'retire'
						? { type: value.step, reason: value.reason ?? '' }
						: value.step === 'withdraw'
							? { type: 'withdraw', reason: value.reason }
							: { type: 'submit' }
		const outcome = await takeWorkflowStep(db, { actor, versionId, event, now })
		if (!outcome.ok) return fail(outcome.error)
		return redirectWithToast(new URL(request.url).pathname, {
			kind: 'success',
			title: `${STEP_DONE[value.step]} · ${VERSION_STATE_LABELS[outcome.value.state]}`,
		})
	}
	if (value.intent === 'redline-add') {
		const actor = authorize(context, 'spec-version:sign')
		const outcome = await addRedline(db, {
			actor,
			versionId,
			anchor: value.anchor,
			body: value.body,
			suggestedText: value.suggestedText?.trim() ? value.suggestedText : null,
			now,
		})
		if (!outcome.ok) return fail(outcome.error)
		return redirectWithToast(`${new URL(request.url).pathname}#redlines-heading`, {
			kind: 'success',
			title: 'Redline added',
		})
	}
	const actor = authorize(context, value.intent === 'redline-accept' ? 'spec:edit' : 'spec:read')
	const outcome =
		value.intent === 'redline-reply'
			? await replyToRedline(db, { actor, redlineId: value.redlineId, body: value.body, now })
			: value.intent === 'redline-accept'
				? await acceptRedlineSuggestion(db, { actor, redlineId: value.redlineId, now })
				: await setRedlineStatus(db, {
						actor,
						redlineId: value.redlineId,
						status: value.intent === 'redline-resolve' ? 'resolved' : 'open',
						resolution: null,
						now,
					})
	if (!outcome.ok) return fail(outcome.error)
	const titles = {
		'redline-reply': 'Reply added',
		'redline-accept': 'Suggestion accepted into the draft',
		'redline-resolve': 'Redline resolved',
		'redline-reopen': 'Redline reopened',
	} as const
	return redirectWithToast(`${new URL(request.url).pathname}#redlines-heading`, {
		kind: 'success',
		title: titles[value.intent],
	})
}

const STEP_DONE = {
	submit: 'Submitted for review',
	withdraw: 'Withdrawn from review',
	reject: 'Returned to draft',
	'sign-reviewed': 'Signed as reviewed',
	'sign-approved': 'Signed as approved',
	retire: 'Retired',
} as const

export async function action({ request, context, params }: Route.ActionArgs) {
	const formData = await request.formData()
	const intent = String(formData.get('intent') ?? '')
	if (intent === 'workflow' || intent.startsWith('redline-'))
		return workflowAction(request, context, params.versionId, formData)
	const actor = authorize(context, 'spec:edit')
	const base = { actor, versionId: params.versionId, now: new Date() }
	if (formData.get('intent') === 'save') {
		const submission = parseWithZod(formData, { schema: VersionFormSchema })
		if (submission.status !== 'success')
			return data({ result: submission.reply(), bandProblems: [] as Array<BandRowProblem> }, { status: 400 })
		const outcome = await saveDraft(db, {
			...base,
			revision: submission.value.revision,
			content: contentFromForm(submission.value),
			changeReason: submission.value.changeReason || null,
		})
		if (!outcome.ok) {
			const bandProblems = outcome.error instanceof BandTableInvalid ? outcome.error.problems : []
			const message =
				outcome.error instanceof BandTableInvalid
					? 'The band table has problems: see the highlighted rows.'
					: outcome.error.message
			return data(
				{ result: submission.reply({ formErrors: [message] }), bandProblems },
				{ status: outcome.error.status },
			)
		}
		return redirectWithToast(request.url, {
			kind: 'success',
			title: 'Draft saved',
			description: `Revision ${outcome.value.revision}`,
		})
	}
	const submission = parseWithZod(formData, { schema: EvidenceActionSchema })
	if (submission.status !== 'success')
		return data({ result: submission.reply(), bandProblems: [] as Array<BandRowProblem> }, { status: 400 })
	const value = submission.value
	const outcome =
		value.intent === 'compare'
			? await recordComparison(db, { ...base, sampleSpectrumId: value.sampleSpectrumId })
			: value.intent === 'specificity'
				? await recordSpecificity(db, base)
				: value.intent === 'accept-threshold'
					? await acceptThresholdSuggestion(db, { ...base, evidenceId: value.evidenceId })
					: await startNextVersion(db, {
							actor,
							specificationId: params.specId,
							changeReason: value.changeReason,
							now: base.now,
						})
	if (!outcome.ok)
		return data(
			{ result: submission.reply({ formErrors: [outcome.error.message] }), bandProblems: [] as Array<BandRowProblem> },
			{ status: outcome.error.status },
		)
	if ('versionNumber' in outcome.value) {
		return redirectWithToast(`/specifications/${params.specId}/versions/${outcome.value.versionId}`, {
			kind: 'success',
			title: `Version ${outcome.value.versionNumber} started as a draft`,
		})
	}
	const titles = {
		compare: 'Comparison recorded',
		specificity: 'Specificity check recorded',
		'accept-threshold': 'Threshold taken into the draft',
		'new-version': 'Version started',
	} as const
	return redirectWithToast(`${new URL(request.url).pathname}#evidence`, {
		kind: 'success',
		title: titles[value.intent],
	})
}

export default function VersionWorkspace({ loaderData, actionData }: Route.ComponentProps) {
	const {
		specification,
		version,
		content,
		reference,
		versions,
		evidence,
		spectra,
		canEdit,
		canStartVersion,
		workflow,
		verified,
	} = loaderData
	const base = `/specifications/${specification.id}/versions/${version.id}`
	const viewerBands = content.bands.map((row) => ({
		position: row.position,
		tolerance: row.tolerance ?? undefined,
		label: String(Math.round(row.position)),
	}))
	return (
		<>
			<header className="border-rule mb-6 border-b pb-4">
				<p className="text-ink-faint text-sm">
					<Link to="/specifications" className="hover:text-accent underline-offset-4 hover:underline">
						Specifications
					</Link>{' '}
					/ {specification.documentNumber}
				</p>
				<div className="mt-1 flex flex-wrap items-center gap-3">
					<h1 className="text-2xl font-bold">{specification.title}</h1>
					<VersionStateBadge state={version.state} />
				</div>
				<p className="text-ink-soft mt-1 text-sm">
					{specification.documentNumber} · version {version.versionNumber} · {specification.material.code}{' '}
					{specification.material.name}
					{specification.material.casNumber ? ` (CAS ${specification.material.casNumber})` : ''} · drafted by{' '}
					{version.authorName} · last saved {formatUtc(version.updatedAt)}
				</p>
				{version.lastRejectionReason && version.state === 'draft' ? (
					<p className="border-caution bg-caution-soft mt-3 rounded-md border-l-4 px-3 py-2 text-sm">
						Returned to draft: {version.lastRejectionReason}
					</p>
				) : null}
			</header>
			{workflow ? (
				<div className="mb-6 grid gap-4 xl:grid-cols-2">
					<WorkflowActions
						actions={workflow.actions}
						statements={workflow.statements}
						errors={actionData?.result?.error?.[''] ?? undefined}
					/>
					<SignatureManifest signatures={workflow.signatures} verified={verified} />
				</div>
			) : null}
			{workflow && (workflow.redlines.length > 0 || loaderData.canRedline) ? (
				<div className="mb-6">
					<RedlinePanel
						threads={workflow.redlines}
						bands={content.bands}
						canAdd={loaderData.canRedline}
						canAccept={loaderData.canAcceptRedline}
						canDiscuss={loaderData.canDiscussRedlines}
					/>
				</div>
			) : null}
			{canEdit ? (
				<DraftEditor key={version.revision} loaderData={loaderData} actionResult={actionData} base={base} />
			) : (
				<ContentView
					content={content}
					referenceName={reference?.fileName ?? null}
					changeReason={version.changeReason}
				/>
			)}
			{reference ? (
				<section aria-labelledby="reference-heading" className="mt-8">
					<h2 id="reference-heading" className="mb-2 text-lg font-bold">
						Reference spectrum
					</h2>
					<p className="text-ink-soft mb-2 text-sm">
						<Link to={`/spectra/${reference.id}`} className="text-accent underline underline-offset-4">
							{reference.fileName}
						</Link>{' '}
						· SHA-256 <span className="font-mono text-xs break-all">{reference.sha256}</span>
					</p>
					<SpectrumViewer
						sources={[{ id: reference.id, label: reference.fileName, url: `/spectra/${reference.id}/data` }]}
						bands={viewerBands}
						exclusionRegions={content.criteria.exclusionRegions}
					/>
				</section>
			) : null}
			<section id="evidence" aria-labelledby="evidence-heading" className="mt-8">
				<h2 id="evidence-heading" className="mb-2 text-lg font-bold">
					Evidence
				</h2>
				{canEdit ? (
					<EvidenceForms
						spectra={spectra}
						hasReference={Boolean(content.referenceSpectrumId)}
						actionResult={actionData}
					/>
				) : null}
				<EvidenceList
					canAcceptThreshold={canEdit}
					items={evidence}
					referenceId={reference?.id ?? null}
					referenceName={reference?.fileName ?? null}
					bands={viewerBands}
					exclusionRegions={content.criteria.exclusionRegions}
				/>
			</section>
			<div className="mt-8">
				<DossierPanel
					base={base}
					stored={['approved', 'effective', 'superseded', 'retired'].includes(version.state)}
					withRuns={['effective', 'superseded', 'retired'].includes(version.state)}
				/>
			</div>
			<section aria-labelledby="history-heading" className="mt-8">
				<h2 id="history-heading" className="mb-2 text-lg font-bold">
					Versions
				</h2>
				<ol className="bg-sheet border-rule divide-rule divide-y rounded-lg border text-sm">
					{versions.map((item) => (
						<li key={item.id} className="flex flex-wrap items-center gap-3 px-4 py-2">
							<Link
								to={`/specifications/${specification.id}/versions/${item.id}`}
								className="text-accent font-medium underline-offset-4 hover:underline"
								aria-current={item.id === version.id ? 'page' : undefined}
							>
								Version {item.versionNumber}
							</Link>
							<VersionStateBadge state={item.state} />
							<span className="text-ink-soft">{item.changeReason ?? 'First version'}</span>
							{item.versionNumber > 1 ? (
								<Link
									to={`/specifications/${specification.id}/changes?to=${item.id}`}
									className="text-accent text-xs underline underline-offset-4"
								>
									Changes from version {item.versionNumber - 1}
								</Link>
							) : null}
							<span className="text-ink-faint ml-auto tabular-nums">
								{item.effectiveAt ? `effective ${formatUtc(item.effectiveAt)}` : `saved ${formatUtc(item.updatedAt)}`}
							</span>
						</li>
					))}
				</ol>
				{canStartVersion &&
				!versions.some((item) => item.state === 'draft' || item.state === 'in_review' || item.state === 'approved') ? (
					<Form
						method="post"
						className="bg-sheet border-rule mt-3 flex flex-wrap items-end gap-3 rounded-lg border p-4"
					>
						<div className="min-w-80 flex-1">
							<label htmlFor="new-version-reason" className="mb-1 block text-sm font-medium">
								Reason for a new version
							</label>
							<input
								id="new-version-reason"
								name="changeReason"
								className={inputClass}
								placeholder="e.g. Tighten the carbonyl tolerance after the 2026 method review"
							/>
						</div>
						<Button type="submit" name="intent" value="new-version" variant="secondary">
							Start a new version
						</Button>
					</Form>
				) : null}
			</section>
			<CautionNote className="mt-8" />
		</>
	)
}

type WorkspaceData = Route.ComponentProps['loaderData']
type ActionResult = Route.ComponentProps['actionData']

function DraftEditor({
	loaderData,
	actionResult,
	base,
}: {
	loaderData: WorkspaceData
	actionResult: ActionResult
	base: string
}) {
	const { version, content, spectra } = loaderData
	const navigation = useNavigation()
	const defaults = useMemo(
		() => formFromContent(content, version.revision, version.changeReason),
		[content, version.revision, version.changeReason],
	)
	const [form, fields] = useForm({
		id: `draft-${version.id}`,
		lastResult: actionResult?.result,
		defaultValue: defaults,
		onValidate: ({ formData }) => parseWithZod(formData, { schema: VersionFormSchema }),
		shouldValidate: 'onBlur',
		shouldRevalidate: 'onInput',
	})
	const bandsValue = (fields.bands.initialValue as string | undefined) ?? defaults.bands
	const initialRows = useMemo<Array<BandRow>>(() => {
		try {
			return JSON.parse(bandsValue) as Array<BandRow>
		} catch {
			return content.bands
		}
	}, [bandsValue, content.bands])
	const references = spectra.filter((spectrum) => spectrum.purpose === 'reference')
	return (
		<Form method="post" {...getFormProps(form)} className="space-y-6">
			<FormErrors id={form.errorId} errors={form.errors} />
			<input {...getInputProps(fields.revision, { type: 'hidden' })} />
			<section className="bg-sheet border-rule space-y-4 rounded-lg border p-5">
				<h2 className="text-lg font-bold">Scope</h2>
				{version.versionNumber > 1 ? (
					<Field
						label="Reason for this version"
						hint="Required for every version after the first"
						errors={fields.changeReason.errors}
						inputProps={getInputProps(fields.changeReason, { type: 'text' })}
					/>
				) : null}
				<TextareaField
					label="Scope"
					hint="Which material, grades and suppliers this test applies to"
					errors={fields.scope.errors}
					textareaProps={getTextareaProps(fields.scope)}
				/>
			</section>
			<section className="bg-sheet border-rule space-y-4 rounded-lg border p-5">
				<h2 className="text-lg font-bold">Method</h2>
				<div className="grid gap-4 md:grid-cols-5">
					<div className="md:col-span-2">
						<label htmlFor={fields.technique.id} className="mb-1 block text-sm font-medium">
							Technique
						</label>
						<select {...getSelectProps(fields.technique)} className={inputClass}>
							{TECHNIQUES.map((technique) => (
								<option key={technique} value={technique}>
									{technique}
								</option>
							))}
						</select>
					</div>
					<Field
						label="Range from (cm⁻¹)"
						errors={fields.rangeFrom.errors}
						inputProps={{ ...getInputProps(fields.rangeFrom, { type: 'text' }), inputMode: 'decimal' }}
					/>
					<Field
						label="Range to (cm⁻¹)"
						errors={fields.rangeTo.errors}
						inputProps={{ ...getInputProps(fields.rangeTo, { type: 'text' }), inputMode: 'decimal' }}
					/>
					<Field
						label="Resolution (cm⁻¹)"
						errors={fields.resolution.errors}
						inputProps={{ ...getInputProps(fields.resolution, { type: 'text' }), inputMode: 'decimal' }}
					/>
				</div>
				<div className="grid gap-4 md:grid-cols-5">
					<Field
						label="Scans"
						errors={fields.scans.errors}
						inputProps={{ ...getInputProps(fields.scans, { type: 'text' }), inputMode: 'numeric' }}
					/>
					<TextareaField
						className="md:col-span-4"
						label="Sample preparation"
						errors={fields.samplePreparation.errors}
						textareaProps={getTextareaProps(fields.samplePreparation)}
					/>
				</div>
				<div>
					<label htmlFor={fields.referenceSpectrumId.id} className="mb-1 block text-sm font-medium">
						Reference spectrum
					</label>
					<select
						{...getSelectProps(fields.referenceSpectrumId)}
						className={inputClass}
						aria-describedby={fields.referenceSpectrumId.errors ? fields.referenceSpectrumId.errorId : undefined}
					>
						<option value="">None chosen yet</option>
						{references.map((spectrum) => (
							<option key={spectrum.id} value={spectrum.id}>
								{spectrum.fileName}
								{spectrum.materialCode ? ` (${spectrum.materialCode})` : ''}
							</option>
						))}
					</select>
					{references.length === 0 ? (
						<p className="text-ink-faint mt-1 text-xs">
							The library holds no reference spectra yet.{' '}
							<Link to="/spectra/upload" className="text-accent underline">
								Upload one
							</Link>{' '}
							with the purpose "Reference".
						</p>
					) : null}
				</div>
			</section>
			<section className="bg-sheet border-rule space-y-4 rounded-lg border p-5">
				<h2 className="text-lg font-bold">Acceptance criteria</h2>
				<div className="grid gap-4 md:grid-cols-3">
					<Field
						label="Minimum correlation"
						hint="Pearson, over the included regions"
						errors={fields.minCorrelation.errors}
						inputProps={{ ...getInputProps(fields.minCorrelation, { type: 'text' }), inputMode: 'decimal' }}
					/>
					<Field
						label="Minimum derivative correlation"
						hint="Optional; first derivative"
						errors={fields.minDerivativeCorrelation.errors}
						inputProps={{ ...getInputProps(fields.minDerivativeCorrelation, { type: 'text' }), inputMode: 'decimal' }}
					/>
					<Field
						label="Default band tolerance (± cm⁻¹)"
						hint="Empty: 0.5 % of each position"
						errors={fields.defaultBandTolerance.errors}
						inputProps={{ ...getInputProps(fields.defaultBandTolerance, { type: 'text' }), inputMode: 'decimal' }}
					/>
				</div>
				<div className="grid gap-4 md:grid-cols-2">
					<TextareaField
						label="Exclusion regions"
						hint='One per line: "2400-2280 atmospheric CO₂"'
						errors={fields.exclusionRegions.errors}
						textareaProps={getTextareaProps(fields.exclusionRegions)}
					/>
					<TextareaField
						label="Justification of the thresholds"
						hint="Why these numbers: replicate and nearest non-target correlations, validation report"
						errors={fields.thresholdJustification.errors}
						textareaProps={getTextareaProps(fields.thresholdJustification)}
					/>
				</div>
			</section>
			<section className="bg-sheet border-rule rounded-lg border p-5">
				<FormErrors id={fields.bands.errorId} errors={bandErrors(form.allErrors)} />
				<BandTableEditor
					name={fields.bands.name}
					initialRows={initialRows}
					problems={actionResult?.bandProblems ?? []}
					suggestionsUrl={`${base}/band-suggestions`}
				/>
			</section>
			<section className="bg-sheet border-rule rounded-lg border p-5">
				<TextareaField label="Notes" errors={fields.notes.errors} textareaProps={getTextareaProps(fields.notes)} />
			</section>
			<div className="bg-paper border-rule sticky bottom-0 flex items-center gap-3 border-t py-3">
				<Button type="submit" name="intent" value="save" disabled={navigation.state === 'submitting'}>
					{navigation.state === 'submitting' ? 'Saving…' : 'Save draft'}
				</Button>
				<span className="text-ink-faint text-sm" data-testid="draft-revision">
					Revision {version.revision}. Saving keeps a record of every change in the audit trail.
				</span>
			</div>
		</Form>
	)
}

/** Every error about the band table (the table itself or one of its cells), with the row it concerns. */
function bandErrors(allErrors: Record<string, Array<string>>): Array<string> | undefined {
	const messages = Object.entries(allErrors)
		.filter(([key]) => key === 'bands' || key.startsWith('bands['))
		.flatMap(([key, errors]) => {
			const row = /^bands\[(\d+)\]\.?(\w*)/.exec(key)
			return errors.map((error) => (row ? `Band ${Number(row[1]) + 1}${row[2] ? `, ${row[2]}` : ''}: ${error}` : error))
		})
	return messages.length ? messages : undefined
}

function EvidenceForms({
	spectra,
	hasReference,
	actionResult,
}: {
	spectra: WorkspaceData['spectra']
	hasReference: boolean
	actionResult: ActionResult
}) {
	const navigation = useNavigation()
	const busy =
		navigation.state === 'submitting' && ['compare', 'specificity'].includes(String(navigation.formData?.get('intent')))
	if (!hasReference)
		return (
			<p className="text-ink-soft mb-3 text-sm">
				Choose a reference spectrum and save the draft; then compare spectra with it and check its specificity here.
			</p>
		)
	return (
		<div className="bg-sheet border-rule mb-4 grid gap-4 rounded-lg border p-4 md:grid-cols-2">
			<Form method="post" className="space-y-2">
				<label htmlFor="compare-spectrum" className="block text-sm font-medium">
					Compare a stored spectrum with the reference
				</label>
				<div className="flex gap-2">
					<select id="compare-spectrum" name="sampleSpectrumId" className={inputClass} defaultValue="">
						<option value="" disabled>
							Choose a spectrum…
						</option>
						{spectra.map((spectrum) => (
							<option key={spectrum.id} value={spectrum.id}>
								{spectrum.fileName}
								{spectrum.materialCode ? ` (${spectrum.materialCode})` : ''}
							</option>
						))}
					</select>
					<Button type="submit" name="intent" value="compare" variant="secondary" disabled={busy}>
						Compare
					</Button>
				</div>
			</Form>
			<Form method="post" className="space-y-2">
				<p className="text-sm font-medium">Specificity against the other materials' references</p>
				<Button type="submit" name="intent" value="specificity" variant="secondary" disabled={busy}>
					{busy ? 'Computing…' : 'Check specificity'}
				</Button>
			</Form>
			{actionResult?.result?.error?.[''] ? <FormErrors errors={actionResult.result.error['']} /> : null}
		</div>
	)
}

export function meta({ loaderData }: Route.MetaArgs) {
	return [
		{
			title: loaderData
				? `${loaderData.specification.documentNumber} v${loaderData.version.versionNumber} (${VERSION_STATE_LABELS[loaderData.version.state]}) · Bandproof`
				: 'Specification · Bandproof',
		},
	]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
