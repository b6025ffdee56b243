import { parseWithZod } from '@conform-to/zod/v4'
import { data, Form, Link, useNavigation } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/$runId'
import { reauthenticate } from '#app/.server/auth.ts'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getRun } from '#app/.server/queries/runs.ts'
import { concludeInvestigation, signIdentityRun } from '#app/.server/services/identity-runs.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { CautionNote } from '#app/components/caution-note.tsx'
import { FormErrors, inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { OutcomeBadge, RunStateBadge, VerdictBadge } from '#app/components/run-badges.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { cn, formatUtc } from '#app/utils/misc.ts'
import { can } from '#shared/authz/permissions.ts'
import { InvestigationFormSchema, RunSignFormSchema } from '#shared/runs/forms.ts'
import { CONCLUSION_LABELS, retestPermitted, runStepPermitted } from '#shared/runs/run-rules.ts'

function runIdOf(params: { runId: string }): string {
	const parsed = z.uuid().safeParse(params.runId)
	if (!parsed.success) throw data({ message: 'This run does not exist, or its address is wrong.' }, { status: 404 })
	return parsed.data
}

export async function loader({ context, params }: Route.LoaderArgs) {
	const actor = authorize(context, 'run:read')
	const found = await getRun(db, runIdOf(params))
	if (!found) throw data({ message: 'This run does not exist, or its address is wrong.' }, { status: 404 })
	const { snapshot, containers, ...rest } = found
	// What this person may do now, decided by the same rules the server applies on submit.
	const may = {
		sign: runStepPermitted(snapshot, 'sign-performed', actor).ok,
		verify: runStepPermitted(snapshot, 'verify', actor).ok,
		conclude: runStepPermitted(snapshot, 'close-investigation', actor).ok,
		retest: can(actor, 'run:record') && retestPermitted(snapshot).ok,
	}
	const whyNotVerify =
		snapshot.state === 'performed' && !may.verify && can(actor, 'run:verify')
			? 'You performed this run; a second person verifies it.'
			: null
	// The table needs each container's reasons and band count, not its whole stored comparison.
	const rows = containers.map(({ result, ...row }) => {
		const stored = result as { reasons: Array<string>; bands: Array<{ withinTolerance: boolean }> }
		return {
			...row,
			reasons: stored.reasons,
			bandsWithin: stored.bands.filter((band) => band.withinTolerance).length,
			bandCount: stored.bands.length,
		}
	})
	return { ...rest, containers: rows, may, whyNotVerify }
}

export async function action({ request, context, params }: Route.ActionArgs) {
	const actor = authorize(context, 'run:read')
	const runId = runIdOf(params)
	const formData = await request.formData()
	const intent = formData.get('intent')
	const fail = (message: string, status: number) => data({ intent: String(intent), error: message }, { status })
	if (intent === 'close-investigation') {
		authorize(context, 'investigation:close')
		const submission = parseWithZod(formData, { schema: InvestigationFormSchema })
		if (submission.status !== 'success') {
			const errors = Object.values(submission.error ?? {})
				.flat()
				.filter(Boolean)
			return data(
				{ intent: 'close-investigation', error: errors.join(' '), summary: String(formData.get('summary') ?? '') },
				{ status: 400 },
			)
		}
		const reauthenticated = await reauthenticate(actor.id, submission.value.password)
		if (!reauthenticated.ok)
			return data(
				{ intent: 'close-investigation', error: reauthenticated.error.message, summary: submission.value.summary },
				{ status: reauthenticated.error.status },
			)
		const outcome = await concludeInvestigation(db, {
			actor,
			runId,
			conclusion: submission.value.conclusion,
			summary: submission.value.summary,
			now: new Date(),
		})
		if (!outcome.ok)
			return data(
				{ intent: 'close-investigation', error: outcome.error.message, summary: submission.value.summary },
				{ status: outcome.error.status },
			)
		return redirectWithToast(`/runs/${runId}`, {
			kind: 'success',
			title: 'Investigation concluded',
			description: CONCLUSION_LABELS[submission.value.conclusion],
		})
	}
	// The signature asked for decides the permission, before the rest of the form is read: someone who may not sign
	// is told so, not asked for a password.
	const signing = RunSignFormSchema.shape.intent.safeParse(intent)
	if (!signing.success) return fail('Choose what to sign.', 400)
	authorize(context, signing.data === 'verify' ? 'run:verify' : 'run:record')
	const submission = RunSignFormSchema.safeParse(Object.fromEntries(formData))
	if (!submission.success) return fail('Type your password to sign.', 400)
	const reauthenticated = await reauthenticate(actor.id, submission.data.password)
	if (!reauthenticated.ok) return fail(reauthenticated.error.message, reauthenticated.error.status)
	const outcome = await signIdentityRun(db, { actor, runId, intent: submission.data.intent, now: new Date() })
	if (!outcome.ok) return fail(outcome.error.message, outcome.error.status)
	return redirectWithToast(`/runs/${runId}`, {
		kind: 'success',
		title: submission.data.intent === 'verify' ? 'Run verified' : 'Run signed as performed',
		description:
			submission.data.intent === 'verify' ? 'Both signatures are on record.' : 'A second person verifies it next.',
	})
}

const fixed = (value: number | null | undefined, digits = 4) =>
	value === null || value === undefined ? '—' : value.toFixed(digits)

export default function RunPage({ loaderData, actionData }: Route.ComponentProps) {
	const { run, lot, material, instrument, check, containers, signatures, retests, retestOf, criteria, may } = loaderData
	const threshold = criteria.minCorrelation
	const notConforming = containers.filter((row) => row.verdict !== 'conforms')
	return (
		<>
			<PageHeader
				title={`Identity run ${run.runNumber}`}
				description={
					<>
						Lot{' '}
						<Link to={`/lots/${lot.id}`} className="text-accent underline-offset-4 hover:underline">
							{lot.lotNumber}
						</Link>{' '}
						of {material.code} · {material.name}, {lot.containerCount} containers from {lot.supplier}
					</>
				}
				actions={
					<>
						<a href={`/runs/${run.id}/record.pdf`} className={buttonVariants({ variant: 'secondary' })} download>
							Run record (PDF)
						</a>
						{may.retest ? (
							<Link to={`/runs/${run.id}/retest`} className={buttonVariants({ variant: 'secondary' })}>
								Record a retest
							</Link>
						) : null}
					</>
				}
			/>
			<div className="mb-4 flex flex-wrap items-center gap-2" data-testid="run-status">
				<OutcomeBadge outcome={run.outcome} />
				<RunStateBadge state={run.state} />
				{run.investigationConclusion ? (
					<span className="text-sm">{CONCLUSION_LABELS[run.investigationConclusion]}</span>
				) : null}
			</div>
			{run.outcome === 'flagged' ? (
				<section
					aria-label="Investigation"
					className="border-danger bg-danger-soft mb-6 max-w-4xl rounded-md border-l-4 px-4 py-3 text-sm"
				>
					<p className="font-semibold">
						{notConforming.length === 1
							? `Container ${notConforming[0]!.containerNumber} of ${containers.length} does not clearly conform.`
							: `${notConforming.length} of ${containers.length} containers do not clearly conform: containers ${notConforming.map((row) => row.containerNumber).join(', ')}.`}
					</p>
					<p className="mt-1">
						This run stays flagged. Follow your out-of-specification procedure: a retest is recorded as a new run linked
						to this one, and the lot's identity is not confirmed while the investigation is open.
					</p>
					{run.investigationConclusion ? (
						<p className="mt-2">
							Concluded {formatUtc(run.investigationClosedAt)} by {run.investigationClosedByName}:{' '}
							{run.investigationSummary}
						</p>
					) : null}
				</section>
			) : null}

			<dl className="bg-sheet border-rule mb-6 grid max-w-5xl grid-cols-1 gap-x-8 gap-y-2 rounded-lg border p-5 text-sm sm:grid-cols-2">
				<div>
					<dt className="text-ink-faint">Specification</dt>
					<dd>
						<Link
							to={`/specifications/${loaderData.specificationId}/versions/${loaderData.versionId}`}
							className="text-accent underline-offset-4 hover:underline"
						>
							{run.documentNumber} version {run.versionNumber}
						</Link>
						, correlation threshold {threshold}
					</dd>
				</div>
				<div>
					<dt className="text-ink-faint">Instrument</dt>
					<dd>
						<Link to={`/instruments/${instrument.id}`} className="text-accent underline-offset-4 hover:underline">
							{instrument.code}
						</Link>
						, polystyrene check passed {formatUtc(check.performedAt)}, valid until {formatUtc(check.validUntil)}
					</dd>
				</div>
				<div>
					<dt className="text-ink-faint">Recorded</dt>
					<dd>
						{formatUtc(run.recordedAt)} by {run.recordedByName}
					</dd>
				</div>
				<div>
					<dt className="text-ink-faint">Linked runs</dt>
					<dd>
						{retestOf ? (
							<>
								Retest of{' '}
								<Link to={`/runs/${retestOf.id}`} className="text-accent underline-offset-4 hover:underline">
									{retestOf.runNumber}
								</Link>
								{run.retestReason ? `: ${run.retestReason}` : ''}
							</>
						) : null}
						{retests.length ? (
							<>
								{retestOf ? '; ' : ''}Retested by{' '}
								{retests.map((retest, index) => (
									<span key={retest.id}>
										{index ? ', ' : ''}
										<Link to={`/runs/${retest.id}`} className="text-accent underline-offset-4 hover:underline">
											{retest.runNumber}
										</Link>
									</span>
								))}
							</>
						) : null}
						{!retestOf && !retests.length ? '—' : null}
					</dd>
				</div>
				<div className="sm:col-span-2">
					<dt className="text-ink-faint">Record SHA-256 (what the signatures cover)</dt>
					<dd className="font-mono text-xs break-all" data-testid="record-hash">
						{loaderData.recordSha256}
					</dd>
				</div>
			</dl>

			<h2 className="mb-2 text-lg font-semibold">Containers</h2>
			<ListTable
				headers={[
					{ label: 'Container', align: 'right' },
					'Sample file',
					'Verdict',
					{ label: 'Correlation', align: 'right' },
					{ label: 'Derivative', align: 'right' },
					{ label: 'Bands within tolerance', align: 'right' },
					'Why',
				]}
				caption="Verdict of every container, with the numbers behind it"
				className="mb-6"
				testId="containers"
			>
				{containers.map((row) => (
					<tr key={row.id} className="border-rule border-b align-top last:border-0">
						<td className="px-3 py-2 text-right font-medium tabular-nums">
							<Link
								to={`/runs/${run.id}/containers/${row.containerNumber}`}
								className="text-accent underline-offset-4 hover:underline"
								aria-label={`Evidence of container ${row.containerNumber}`}
							>
								{row.containerNumber}
							</Link>
						</td>
						<td className="px-3 py-2 whitespace-nowrap">{row.fileName}</td>
						<td className="px-3 py-2">
							<VerdictBadge verdict={row.verdict} />
						</td>
						<td
							className={cn(
								'px-3 py-2 text-right tabular-nums',
								row.correlation !== null && row.correlation < threshold && 'text-danger font-semibold',
							)}
						>
							{fixed(row.correlation)}
						</td>
						<td className="px-3 py-2 text-right tabular-nums">{fixed(row.derivativeCorrelation)}</td>
						<td className="px-3 py-2 text-right tabular-nums">
							{row.bandsWithin} / {row.bandCount}
						</td>
						<td className="text-ink-soft max-w-md px-3 py-2">
							{row.reasons.length === 0 ? (
								'—'
							) : (
								<>
									{row.reasons[0]}
									{row.reasons.length > 1 ? (
										<span className="block text-xs">and {row.reasons.length - 1} more on the container's page</span>
									) : null}
								</>
							)}
						</td>
					</tr>
				))}
			</ListTable>

			<h2 className="mb-2 text-lg font-semibold">Signatures</h2>
			{signatures.length === 0 ? (
				<p className="text-ink-soft mb-4 text-sm">Not signed yet.</p>
			) : (
				<ul className="mb-4 max-w-4xl space-y-2" data-testid="signatures">
					{signatures.map((signature) => (
						<li key={signature.id} className="bg-sheet border-rule rounded-lg border p-4 text-sm">
							<p className="font-semibold">
								{signature.printedName} · {signature.meaning === 'performed' ? 'Performed' : 'Verified'} ·{' '}
								{formatUtc(signature.signedAt)}
							</p>
							<p className="text-ink-soft mt-1">{signature.statement}</p>
						</li>
					))}
				</ul>
			)}
			{may.sign ? (
				<SignForm
					intent="sign-performed"
					label="Sign as performed"
					explain="You confirm that every container result recorded here is complete and accurate."
					error={
						actionData && 'intent' in actionData && actionData.intent === 'sign-performed' ? actionData.error : null
					}
				/>
			) : null}
			{may.verify ? (
				<SignForm
					intent="verify"
					label="Verify this run"
					explain="As the second person you confirm that the samples, the instrument check, the data and every verdict are complete and correct."
					error={actionData && 'intent' in actionData && actionData.intent === 'verify' ? actionData.error : null}
				/>
			) : loaderData.whyNotVerify ? (
				<p className="text-ink-soft mb-4 text-sm">{loaderData.whyNotVerify}</p>
			) : null}
			{may.conclude ? (
				<InvestigationForm
					error={
						actionData && 'intent' in actionData && actionData.intent === 'close-investigation'
							? actionData.error
							: null
					}
					summary={actionData && 'summary' in actionData ? String(actionData.summary ?? '') : ''}
				/>
			) : null}
			<CautionNote className="mt-6 max-w-4xl" />
		</>
	)
}

function SignForm({
	intent,
	label,
	explain,
	error,
}: {
	intent: 'sign-performed' | 'verify'
	label: string
	explain: string
	error: string | null
}) {
	const navigation = useNavigation()
	return (
		<Form method="post" className="bg-sheet border-rule mb-4 max-w-2xl space-y-3 rounded-lg border p-5">
			<h3 className="font-semibold">{label}</h3>
			<p className="text-ink-soft text-sm">{explain} Type your password to sign.</p>
			<FormErrors errors={error ? [error] : undefined} />
			<input type="hidden" name="intent" value={intent} />
			<div>
				<label htmlFor={`${intent}-password`} className="mb-1 block text-sm font-medium">
					Password
				</label>
				<input
					id={`${intent}-password`}
					name="password"
					type="password"
					autoComplete="current-password"
					required
					className={cn(inputClass, 'max-w-sm')}
				/>
			</div>
			<Button type="submit" disabled={navigation.state === 'submitting'}>
				{label}
			</Button>
		</Form>
	)
}

function InvestigationForm({ error, summary }: { error: string | null; summary: string }) {
	const navigation = useNavigation()
	return (
		<Form method="post" className="bg-sheet border-rule mb-4 max-w-2xl space-y-3 rounded-lg border p-5">
			<h3 className="font-semibold">Conclude the investigation</h3>
			<p className="text-ink-soft text-sm">
				Record the conclusion your investigation procedure reached. Invalidated means a laboratory error was assigned
				and the retest decides; confirmed means the lot does not conform.
			</p>
			<FormErrors errors={error ? [error] : undefined} />
			<input type="hidden" name="intent" value="close-investigation" />
			<fieldset className="space-y-1 text-sm">
				<legend className="mb-1 font-medium">Conclusion</legend>
				{(['invalidated', 'confirmed'] as const).map((conclusion) => (
					<label key={conclusion} className="flex items-center gap-2">
						<input type="radio" name="conclusion" value={conclusion} required />
						{CONCLUSION_LABELS[conclusion]}
					</label>
				))}
			</fieldset>
			<div>
				<label htmlFor="summary" className="mb-1 block text-sm font-medium">
					Summary
				</label>
				<textarea
					id="summary"
					name="summary"
					required
					minLength={10}
					maxLength={4000}
					defaultValue={summary}
					className={cn(inputClass, 'min-h-24')}
				/>
			</div>
			<div>
				<label htmlFor="investigation-password" className="mb-1 block text-sm font-medium">
					Password
				</label>
				<input
					id="investigation-password"
					name="password"
					type="password"
					autoComplete="current-password"
					required
					className={cn(inputClass, 'max-w-sm')}
				/>
			</div>
			<Button type="submit" disabled={navigation.state === 'submitting'}>
				Sign the conclusion
			</Button>
		</Form>
	)
}

export function meta({ data: loaded }: Route.MetaArgs) {
	return [{ title: `${loaded?.run.runNumber ?? 'Identity run'} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
