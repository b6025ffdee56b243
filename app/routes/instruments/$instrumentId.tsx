import { data, Form, Link, useNavigation } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/$instrumentId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { instrumentWithReadiness, listChecks, recordInstrumentCheck } from '#app/.server/services/instruments.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { parseUpload } from '#app/.server/uploads.ts'
import { FormErrors, inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { ReadinessBadge } from '#app/components/run-badges.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { cn, formatUtc } from '#app/utils/misc.ts'
import { can } from '#shared/authz/permissions.ts'
import { CHECK_TABLE_OPTIONS, InstrumentCheckFormSchema } from '#shared/runs/forms.ts'
import type { PolystyreneCheck } from '#shared/spectra/polystyrene.ts'

function instrumentIdOf(params: { instrumentId: string }): string {
	const parsed = z.uuid().safeParse(params.instrumentId)
	if (!parsed.success)
		throw data({ message: 'This instrument does not exist, or its address is wrong.' }, { status: 404 })
	return parsed.data
}

export async function loader({ context, params }: Route.LoaderArgs) {
	const actor = authorize(context, 'instrument:read')
	const found = await instrumentWithReadiness(db, instrumentIdOf(params), new Date())
	if (!found) throw data({ message: 'This instrument does not exist, or its address is wrong.' }, { status: 404 })
	const checks = await listChecks(db, found.instrument.id)
	return {
		instrument: found.instrument,
		readiness: found.readiness,
		checks: checks.map((check) => ({ ...check, result: check.result as PolystyreneCheck })),
		canCheck: can(actor, 'instrument-check:record') && !found.instrument.retiredAt,
	}
}

export async function action({ request, context, params }: Route.ActionArgs) {
	const actor = authorize(context, 'instrument-check:record')
	const instrumentId = instrumentIdOf(params)
	const formData = await parseUpload(request, { maxFiles: 1 })
	const fields = InstrumentCheckFormSchema.safeParse({ notes: formData.get('notes') ?? undefined })
	const notes = typeof formData.get('notes') === 'string' ? String(formData.get('notes')) : ''
	if (!fields.success) return data({ error: 'Notes are at most 2000 characters.', notes }, { status: 400 })
	const file = formData.get('film')
	if (!(file instanceof File) || file.size === 0) {
		return data({ error: 'Choose the polystyrene film spectrum to check.', notes }, { status: 400 })
	}
	const outcome = await recordInstrumentCheck(db, {
		actor,
		instrumentId,
		fileName: file.name,
		bytes: new Uint8Array(await file.arrayBuffer()),
		notes: fields.data.notes,
		now: new Date(),
	})
	if (!outcome.ok) return data({ error: outcome.error.message, notes }, { status: outcome.error.status })
	return redirectWithToast(
		`/instruments/${instrumentId}`,
		outcome.value.passed
			? { kind: 'success', title: 'Check passed', description: 'The instrument is usable for identity runs.' }
			: {
					kind: 'error',
					title: 'Check failed',
					description: 'The instrument cannot be used for identity runs until a check passes.',
				},
	)
}

const day = (date: Date | string) => new Date(date).toISOString().slice(0, 10)
const signed = (value: number | null) =>
	value !== null && Math.abs(value) < 0.05
		? '0.0'
		: value === null
			? '—'
			: `${value > 0 ? '+' : value < 0 ? '−' : '±'}${Math.abs(value).toFixed(1)}`

export default function InstrumentPage({ loaderData, actionData }: Route.ComponentProps) {
	const { instrument, readiness, checks, canCheck } = loaderData
	const navigation = useNavigation()
	const latest = checks[0]
	const table = CHECK_TABLE_OPTIONS.find((option) => option.id === instrument.checkTable)
	return (
		<>
			<PageHeader
				title={`${instrument.code} · ${instrument.name}`}
				description={[instrument.location, instrument.serialNumber && `serial ${instrument.serialNumber}`]
					.filter(Boolean)
					.join(', ')}
				actions={
					<Link to="/instruments" className={buttonVariants({ variant: 'secondary' })}>
						All instruments
					</Link>
				}
			/>
			<section
				aria-label="Readiness"
				className={cn(
					'mb-6 rounded-md border-l-4 px-4 py-3 text-sm',
					readiness.usable ? 'border-good bg-good-soft' : 'border-danger bg-danger-soft',
				)}
			>
				<p className="flex items-center gap-2 font-semibold">
					<ReadinessBadge readiness={readiness} />
					{readiness.usable ? 'Usable for identity runs' : 'Not usable for identity runs'}
				</p>
				<p className="mt-1" data-testid="readiness-message">
					{readiness.message}
				</p>
				<p className="text-ink-soft mt-1">
					Checks follow {table?.label ?? instrument.checkTable} and stay valid for {instrument.checkValidityDays}{' '}
					{instrument.checkValidityDays === 1 ? 'day' : 'days'}.
				</p>
			</section>

			{canCheck ? (
				<Form
					method="post"
					encType="multipart/form-data"
					className="bg-sheet border-rule mb-8 max-w-3xl space-y-4 rounded-lg border p-6"
				>
					<h2 className="text-lg font-semibold">Record a polystyrene check</h2>
					<FormErrors errors={actionData?.error ? [actionData.error] : undefined} />
					<div>
						<label htmlFor="film" className="mb-1 block text-sm font-medium">
							Film spectrum, measured today on this instrument
						</label>
						<input
							id="film"
							name="film"
							type="file"
							required
							accept=".jdx,.dx,.jcamp,.csv,.tsv,.txt,.xy,.prn"
							className="text-sm"
						/>
					</div>
					<div>
						<label htmlFor="notes" className="mb-1 block text-sm font-medium">
							Notes <span className="text-ink-faint font-normal">(optional)</span>
						</label>
						<textarea
							id="notes"
							name="notes"
							maxLength={2000}
							defaultValue={actionData?.notes ?? ''}
							className={cn(inputClass, 'min-h-16')}
						/>
					</div>
					<Button type="submit" disabled={navigation.state === 'submitting'}>
						{navigation.state === 'submitting' ? 'Checking…' : 'Check and record'}
					</Button>
				</Form>
			) : null}

			{latest ? (
				<section aria-labelledby="latest-check" className="mb-8">
					<h2 id="latest-check" className="mb-2 text-lg font-semibold">
						Latest check, {formatUtc(latest.performedAt)} by {latest.performedBy}{' '}
						<StatusBadge tone={latest.passed ? 'good' : 'danger'}>{latest.passed ? 'Passed' : 'Failed'}</StatusBadge>
					</h2>
					<p className="text-ink-soft mb-3 text-sm">
						{latest.result.table.title}. Film spectrum:{' '}
						<Link to={`/spectra/${latest.spectrumId}`} className="text-accent underline-offset-4 hover:underline">
							{latest.fileName}
						</Link>
						.
					</p>
					<ListTable
						headers={[
							{ label: 'Nominal, cm⁻¹', align: 'right' },
							{ label: 'Observed, cm⁻¹', align: 'right' },
							{ label: 'Deviation', align: 'right' },
							{ label: 'Tolerance', align: 'right' },
							'Located by',
							'Result',
						]}
						caption="Band positions of the latest check"
						testId="check-bands"
					>
						{latest.result.bands.map((band) => (
							<tr key={band.nominal} className="border-rule border-b last:border-0">
								<td className="px-3 py-2 text-right tabular-nums">{band.nominal.toFixed(1)}</td>
								<td className="px-3 py-2 text-right tabular-nums">{band.observed?.toFixed(1) ?? '—'}</td>
								<td className="px-3 py-2 text-right tabular-nums">{signed(band.deviation)}</td>
								<td className="px-3 py-2 text-right tabular-nums">±{band.tolerance.toFixed(1)}</td>
								<td className="px-3 py-2">{band.method.replace('-', ' ')}</td>
								<td className="px-3 py-2">
									<StatusBadge tone={band.pass ? 'good' : 'danger'}>{band.pass ? 'Within' : 'Outside'}</StatusBadge>
								</td>
							</tr>
						))}
					</ListTable>
					{latest.result.reasons.length ? (
						<ul className="text-danger mt-3 list-disc pl-5 text-sm">
							{latest.result.reasons.map((reason) => (
								<li key={reason}>{reason}</li>
							))}
						</ul>
					) : null}
					{latest.notes ? <p className="text-ink-soft mt-3 text-sm">Notes: {latest.notes}</p> : null}
				</section>
			) : null}

			<section aria-labelledby="history">
				<h2 id="history" className="mb-2 text-lg font-semibold">
					Check history
				</h2>
				{checks.length === 0 ? (
					<p className="text-ink-soft text-sm">No check recorded yet.</p>
				) : (
					<ListTable
						headers={['Performed', 'By', 'Result', { label: 'Largest deviation', align: 'right' }, 'Valid until']}
					>
						{checks.map((check) => (
							<tr key={check.id} className="border-rule border-b last:border-0">
								<td className="px-3 py-2 tabular-nums">{formatUtc(check.performedAt)}</td>
								<td className="px-3 py-2">{check.performedBy}</td>
								<td className="px-3 py-2">
									<StatusBadge tone={check.passed ? 'good' : 'danger'}>
										{check.passed ? 'Passed' : 'Failed'}
									</StatusBadge>
								</td>
								<td className="px-3 py-2 text-right tabular-nums">
									{Math.max(0, ...check.result.bands.map((band) => Math.abs(band.deviation ?? 0))).toFixed(1)} cm⁻¹
								</td>
								<td className="px-3 py-2 tabular-nums">{check.passed ? day(check.validUntil) : '—'}</td>
							</tr>
						))}
					</ListTable>
				)}
			</section>
		</>
	)
}

export function meta({ data: loaded }: Route.MetaArgs) {
	return [{ title: `${loaded?.instrument.code ?? 'Instrument'} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
