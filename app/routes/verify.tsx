import { createHash } from 'node:crypto'
import { parseFormData } from '@remix-run/form-data-parser'
import { data, Form, Link, useNavigation } from 'react-router'
import type { Route } from './+types/verify'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { clientAddress, recordAudit } from '#app/.server/services/audit.ts'
import { listDossierRecords } from '#app/.server/services/dossiers.ts'
import { inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { identifyDossier, normalizeSha256 } from '#shared/dossier/identify.ts'
import { VERSION_STATE_LABELS } from '#shared/specs/state-labels.ts'

/** Largest copy accepted for checking (a dossier is well under this). */
const MAX_COPY_BYTES = 25 * 1024 * 1024

export function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'dossier:verify')
	return null
}

export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'dossier:verify')
	let formData: FormData
	try {
		formData = await parseFormData(request, { maxFileSize: MAX_COPY_BYTES, maxFiles: 1 }, (file) => file)
	} catch {
		return data(
			{
				error: `The file is larger than ${MAX_COPY_BYTES / 1024 / 1024} MB; a dossier is much smaller. Check that you chose the right file.`,
				typed: '',
			},
			{ status: 413 },
		)
	}
	const file = formData.get('copy')
	const typed = String(formData.get('hash') ?? '')
	let hash: string | null
	let fileName: string | null = null
	if (file instanceof File && file.size > 0) {
		hash = createHash('sha256')
			.update(new Uint8Array(await file.arrayBuffer()))
			.digest('hex')
		fileName = file.name
	} else if (typed.trim()) {
		hash = normalizeSha256(typed)
		if (!hash)
			return data(
				{ error: 'A SHA-256 is 64 hexadecimal digits (0–9, a–f); spaces and colons are ignored.', typed },
				{ status: 400 },
			)
	} else {
		return data({ error: 'Choose the file of the copy, or type its SHA-256.', typed }, { status: 400 })
	}
	const records = await listDossierRecords(db, hash)
	const result = identifyDossier(records, hash)
	const record = records[0] ?? null
	await recordAudit(db, {
		actor: { id: actor.id, label: actor.email },
		action: 'dossier.verified',
		entityType: 'dossier',
		entityId: record?.versionId ?? null,
		after: { sha256: hash, fileName, result: result.status },
		ipAddress: clientAddress(request),
	})
	return {
		typed,
		fileName,
		result,
		record: record && result.status === 'match' ? { ...record, renderedAt: record.renderedAt.toISOString() } : null,
	}
}

export default function VerifyCopy({ actionData }: Route.ComponentProps) {
	const navigation = useNavigation()
	const outcome = actionData && 'result' in actionData ? actionData : null
	const error = actionData && 'error' in actionData ? actionData.error : null
	return (
		<>
			<PageHeader
				title="Verify a copy"
				description="Check that a PDF or DOCX dossier is exactly as Bandproof issued it. Nothing you upload here is stored; only the check is recorded in the audit trail."
			/>
			<Form
				method="post"
				encType="multipart/form-data"
				className="bg-sheet border-rule max-w-2xl space-y-4 rounded-lg border p-6"
			>
				{error ? (
					<p role="alert" className="border-danger bg-danger-soft text-danger rounded-md border px-4 py-3 text-sm">
						{error}
					</p>
				) : null}
				<div>
					<label htmlFor="copy" className="mb-1 block text-sm font-medium">
						The copy (PDF or DOCX)
					</label>
					<input id="copy" type="file" name="copy" accept=".pdf,.docx" className="text-sm" />
				</div>
				<p className="text-ink-faint text-sm">or</p>
				<div>
					<label htmlFor="hash" className="mb-1 block text-sm font-medium">
						Its SHA-256
					</label>
					<input
						id="hash"
						name="hash"
						defaultValue={actionData?.typed ?? ''}
						placeholder="64 hexadecimal digits"
						className={`${inputClass} font-mono`}
					/>
				</div>
				<Button type="submit" disabled={navigation.state === 'submitting'}>
					{navigation.state === 'submitting' ? 'Checking…' : 'Check the copy'}
				</Button>
			</Form>
			{outcome ? (
				<section aria-live="polite" className="mt-6 max-w-2xl" data-testid="verify-result">
					{outcome.result.status === 'match' && outcome.record ? (
						<div className="border-good bg-good-soft rounded-md border-l-4 px-4 py-3 text-sm">
							<p className="flex items-center gap-2 font-semibold">
								<StatusBadge tone="good">Matches</StatusBadge> This copy is exactly as Bandproof issued it.
							</p>
							<dl className="mt-2 grid grid-cols-[10rem_1fr] gap-x-3 gap-y-1">
								<dt className="text-ink-soft">Document</dt>
								<dd>
									<Link
										className="text-accent underline"
										to={`/specifications/${outcome.record.specificationId}/versions/${outcome.record.versionId}`}
									>
										{outcome.record.documentNumber}
									</Link>{' '}
									· {outcome.record.title}
								</dd>
								<dt className="text-ink-soft">Version</dt>
								<dd>
									{outcome.record.versionNumber} ({VERSION_STATE_LABELS[outcome.record.versionState]} when issued)
								</dd>
								<dt className="text-ink-soft">Format</dt>
								<dd>
									{outcome.record.format.toUpperCase()}, rendered {formatUtc(outcome.record.renderedAt)}
								</dd>
								<dt className="text-ink-soft">Template</dt>
								<dd>
									{outcome.record.templateId} {outcome.record.templateVersion}{' '}
									<span className="font-mono text-xs break-all">({outcome.record.templateSha256})</span>
								</dd>
								<dt className="text-ink-soft">SHA-256</dt>
								<dd className="font-mono text-xs break-all">{outcome.result.sha256}</dd>
							</dl>
						</div>
					) : outcome.result.status === 'no-match' ? (
						<div role="alert" className="border-danger bg-danger-soft rounded-md border-l-4 px-4 py-3 text-sm">
							<p className="flex items-center gap-2 font-semibold">
								<StatusBadge tone="danger">No match</StatusBadge> No dossier issued by Bandproof has this content.
							</p>
							<p className="mt-1">
								The copy may have been changed, even by one byte, or it is a draft rendered on demand (drafts are not
								stored). Do not rely on it; get a copy from Bandproof.
							</p>
							<p className="mt-1 font-mono text-xs break-all">
								SHA-256 {outcome.result.sha256}
								{outcome.fileName ? ` of ${outcome.fileName}` : ''}
							</p>
						</div>
					) : outcome.result.status === 'ambiguous' ? (
						<p role="alert" className="border-danger bg-danger-soft rounded-md border-l-4 px-4 py-3 text-sm">
							The same content is stored for more than one document version. Tell your system administrator.
						</p>
					) : outcome.result.status === 'invalid' ? (
						<p role="alert" className="border-danger bg-danger-soft rounded-md border-l-4 px-4 py-3 text-sm">
							{outcome.result.message}
						</p>
					) : null}
				</section>
			) : null}
		</>
	)
}

export function meta() {
	return [{ title: 'Verify a copy · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
