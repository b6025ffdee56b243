import { useEffect, useRef } from 'react'
import { Form, useNavigation } from 'react-router'
import { FormErrors, inputClass } from '#app/components/forms.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import type { AvailableAction } from '#shared/workflow/spec-version-machine.ts'

type Signature = {
	id: string
	voided: boolean
	printedName: string
	meaning: string
	signedAtUtc: string
	signedAtLocal: string
	statement: string
	contentSha256: string
	authentication: string
	matchesCurrentContent: boolean
}

/** The steps this person may take now; signing opens a dialog that shows the statement and asks for the password. */
export function WorkflowActions({
	actions,
	statements,
	errors,
}: {
	actions: Array<AvailableAction>
	statements: { reviewed: string; approved: string }
	errors?: Array<string>
}) {
	const navigation = useNavigation()
	const busy = navigation.state === 'submitting'
	if (actions.length === 0) return null
	return (
		<section aria-labelledby="workflow-heading" className="bg-sheet border-rule rounded-lg border p-5">
			<h2 id="workflow-heading" className="mb-3 text-lg font-bold">
				Your next step
			</h2>
			<FormErrors errors={errors} />
			<div className="flex flex-wrap items-start gap-4">
				{actions.map((action) =>
					action.needs.reauthentication ? (
						<SigningDialog
							key={action.action}
							action={action}
							statement={action.action === 'sign-approved' ? statements.approved : statements.reviewed}
							busy={busy}
							errors={errors}
						/>
					) : action.action === 'retire' ? (
						<details key={action.action} className="border-rule min-w-80 flex-1 rounded-md border p-3 text-sm">
							<summary className="text-ink-soft cursor-pointer">Retire this version…</summary>
							<Form method="post" className="mt-2 flex flex-col gap-2">
								<input type="hidden" name="intent" value="workflow" />
								<input type="hidden" name="step" value="retire" />
								<label htmlFor="reason-retire" className="font-medium">
									Reason (required): the version stops being in force and no later version replaces it
								</label>
								<textarea
									id="reason-retire"
									name="reason"
									className={`${inputClass} min-h-16`}
									disabled={!action.enabled}
								/>
								<div>
									<Button type="submit" variant="danger" disabled={!action.enabled || busy}>
										Retire
									</Button>
								</div>
							</Form>
						</details>
					) : action.needs.reason !== 'none' ? (
						<Form
							key={action.action}
							method="post"
							className="border-rule flex min-w-80 flex-1 flex-col gap-2 rounded-md border p-3"
						>
							<input type="hidden" name="intent" value="workflow" />
							<input type="hidden" name="step" value={action.action} />
							<label htmlFor={`reason-${action.action}`} className="text-sm font-medium">
								{action.needs.reason === 'required'
									? `Reason (required) to ${action.label.toLowerCase()}`
									: `Reason to ${action.label.toLowerCase()} (optional)`}
							</label>
							<textarea
								id={`reason-${action.action}`}
								name="reason"
								className={`${inputClass} min-h-16`}
								disabled={!action.enabled}
							/>
							<div>
								<Button
									type="submit"
									variant={action.action === 'withdraw' ? 'secondary' : 'danger'}
									disabled={!action.enabled || busy}
								>
									{action.label}
								</Button>
							</div>
							{action.reason ? <p className="text-ink-soft text-xs">{action.reason}</p> : null}
						</Form>
					) : (
						<Form key={action.action} method="post" className="flex flex-col gap-1">
							<input type="hidden" name="intent" value="workflow" />
							<input type="hidden" name="step" value={action.action} />
							<Button type="submit" disabled={!action.enabled || busy}>
								{action.label}
							</Button>
							{action.reason ? <p className="text-ink-soft max-w-md text-xs">{action.reason}</p> : null}
						</Form>
					),
				)}
			</div>
		</section>
	)
}

function SigningDialog({
	action,
	statement,
	busy,
	errors,
}: {
	action: AvailableAction
	statement: string
	busy: boolean
	errors?: Array<string>
}) {
	const dialog = useRef<HTMLDialogElement>(null)
	const password = useRef<HTMLInputElement>(null)
	// A refused signature (wrong password) comes back while the dialog is still open: clear the password.
	useEffect(() => {
		if (errors?.length && password.current) password.current.value = ''
	}, [errors])
	const today = new Date(Date.now() - new Date().getTimezoneOffset() * 60_000).toISOString().slice(0, 16)
	return (
		<div className="flex flex-col gap-1">
			<Button onClick={() => dialog.current?.showModal()} disabled={!action.enabled}>
				{action.label}…
			</Button>
			{action.reason ? <p className="text-ink-soft max-w-md text-xs">{action.reason}</p> : null}
			<dialog
				ref={dialog}
				aria-labelledby={`${action.action}-title`}
				className="bg-sheet border-rule m-auto max-w-xl rounded-lg border p-0 shadow-xl backdrop:bg-black/40"
			>
				<Form method="post" className="space-y-4 p-6">
					<input type="hidden" name="intent" value="workflow" />
					<input type="hidden" name="step" value={action.action} />
					<input type="hidden" name="timeZoneOffset" value={String(new Date().getTimezoneOffset())} />
					<h2 id={`${action.action}-title`} className="text-lg font-bold">
						Electronic signature: {action.action === 'sign-approved' ? 'approved' : 'reviewed'}
					</h2>
					<FormErrors errors={errors} />
					<p
						className="bg-paper border-rule rounded-md border p-3 text-sm break-words"
						data-testid="signature-statement"
					>
						{statement}
					</p>
					{action.needs.effectiveFrom ? (
						<div>
							<label htmlFor="effective-from" className="mb-1 block text-sm font-medium">
								Effective from (your local time)
							</label>
							<input
								id="effective-from"
								type="datetime-local"
								name="effectiveFrom"
								defaultValue={today}
								min={today}
								className={inputClass}
							/>
							<p className="text-ink-faint mt-1 text-xs">
								Now or later. The version becomes effective by itself at that time and replaces the current effective
								version.
							</p>
						</div>
					) : null}
					<div>
						<label htmlFor={`${action.action}-password`} className="mb-1 block text-sm font-medium">
							Your password
						</label>
						<input
							ref={password}
							id={`${action.action}-password`}
							type="password"
							name="password"
							autoComplete="current-password"
							required
							className={inputClass}
						/>
						<p className="text-ink-faint mt-1 text-xs">
							Signing requires your password each time. Wrong passwords count toward locking your account.
						</p>
					</div>
					<div className="flex gap-3">
						<Button type="submit" disabled={busy}>
							Sign
						</Button>
						<Button variant="secondary" onClick={() => dialog.current?.close()}>
							Cancel
						</Button>
					</div>
				</Form>
			</dialog>
		</div>
	)
}

/** The signature manifestation: printed name, meaning, date and time in UTC and the signer's zone, and the hash signed. */
export function SignatureManifest({ signatures, verified }: { signatures: Array<Signature>; verified: boolean }) {
	const current = signatures.filter((signature) => !signature.voided)
	const voided = signatures.filter((signature) => signature.voided)
	return (
		<section aria-labelledby="signatures-heading" className="bg-sheet border-rule rounded-lg border p-5">
			<div className="mb-3 flex flex-wrap items-center justify-between gap-2">
				<h2 id="signatures-heading" className="text-lg font-bold">
					Signatures
				</h2>
				{current.length ? (
					<Form method="get" preventScrollReset>
						<input type="hidden" name="verify" value="1" />
						<Button type="submit" size="sm" variant="secondary">
							Verify against the content
						</Button>
					</Form>
				) : null}
			</div>
			{current.length === 0 ? <p className="text-ink-soft text-sm">Not signed yet.</p> : null}
			<ul className="space-y-3">
				{current.map((signature) => (
					<li key={signature.id} className="border-rule rounded-md border p-3 text-sm" data-testid="signature">
						<div className="flex flex-wrap items-center gap-2">
							<span className="font-semibold">{signature.printedName}</span>
							<StatusBadge tone="good">{signature.meaning}</StatusBadge>
							{verified ? (
								signature.matchesCurrentContent ? (
									<StatusBadge tone="good">Content matches what was signed</StatusBadge>
								) : (
									<StatusBadge tone="danger">Content differs from what was signed</StatusBadge>
								)
							) : null}
						</div>
						<p className="text-ink-soft mt-1 tabular-nums">
							{signature.signedAtUtc} · {signature.signedAtLocal}
						</p>
						<p className="mt-1 break-words">{signature.statement}</p>
						<p className="text-ink-faint mt-1 font-mono text-xs break-all">
							SHA-256 {signature.contentSha256} · {signature.authentication}
						</p>
					</li>
				))}
			</ul>
			{voided.length ? (
				<details className="mt-3 text-sm">
					<summary className="text-ink-soft cursor-pointer">
						{voided.length} earlier signature{voided.length === 1 ? '' : 's'} voided by a return to draft
					</summary>
					<ul className="mt-2 space-y-1">
						{voided.map((signature) => (
							<li key={signature.id} className="text-ink-faint">
								{signature.printedName}, {signature.meaning}, {signature.signedAtUtc}
							</li>
						))}
					</ul>
				</details>
			) : null}
		</section>
	)
}
