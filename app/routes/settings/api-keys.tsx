import { parseWithZod } from '@conform-to/zod/v4'
import { useEffect, useRef } from 'react'
import { data, Form, href, Link, useNavigation } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/api-keys'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { createApiKey, listApiKeys, revokeApiKey } from '#app/.server/services/api-keys.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { CopyButton } from '#app/components/copy-button.tsx'
import { FormErrors, inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { API_KEY_SCOPES, apiKeyScopesFor } from '#shared/authz/permissions.ts'

const ApiKeyActionSchema = z.discriminatedUnion('intent', [
	z.object({
		intent: z.literal('create'),
		name: z.string().trim().min(1, 'Give the key a name, e.g. "LIMS import"').max(100),
		scopes: z.array(z.enum(API_KEY_SCOPES)).min(1, 'Choose at least one scope'),
	}),
	z.object({ intent: z.literal('revoke'), keyId: z.uuid() }),
])

// Inside the signed-in layout. Its middleware refuses every POST from read-only accounts except here, where an
// inspector may create and revoke their own keys (ROUTE_POLICIES in app/.server/context.ts); apiKeyScopesFor()
// limits those keys to the read scope, and the service refuses anything wider.
export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'api-key:manage')
	return { keys: await listApiKeys(db, actor.id), allowedScopes: apiKeyScopesFor(actor) }
}

export async function action({ request, context }: Route.ActionArgs) {
	const submission = parseWithZod(await request.formData(), { schema: ApiKeyActionSchema })
	if (submission.status !== 'success') return data({ result: submission.reply(), created: null }, { status: 400 })
	const actor = authorize(context, 'api-key:manage')
	const { value } = submission
	const now = new Date()
	if (value.intent === 'revoke') {
		const outcome = await revokeApiKey(db, { actor, keyId: value.keyId, now })
		if (!outcome.ok)
			return data(
				{ result: submission.reply({ formErrors: [outcome.error.message] }), created: null },
				{ status: outcome.error.status },
			)
		return redirectWithToast(href('/settings/api-keys'), { kind: 'success', title: 'API key revoked' })
	}
	const outcome = await createApiKey(db, { actor, name: value.name, scopes: value.scopes, now })
	if (!outcome.ok)
		return data(
			{ result: submission.reply({ formErrors: [outcome.error.message] }), created: null },
			{ status: outcome.error.status },
		)
	// The token is answered once, in this response, and never again: only its hash is stored.
	return data({
		result: submission.reply({ resetForm: true }),
		created: { name: value.name, token: outcome.value.token },
	})
}

export default function ApiKeys({ loaderData, actionData }: Route.ComponentProps) {
	const navigation = useNavigation()
	const errors = actionData?.result?.error ?? {}
	// Once a key is made, the form starts afresh: the name just used is not left there to be submitted twice.
	const createForm = useRef<HTMLFormElement>(null)
	const created = actionData?.created ?? null
	useEffect(() => {
		if (created) createForm.current?.reset()
	}, [created])
	return (
		<>
			<PageHeader
				title="API keys"
				description={
					<>
						Personal keys for scripts and instruments calling /api/v1 (see the{' '}
						<Link to={href('/api-docs')} className="text-accent underline-offset-4 hover:underline">
							API reference
						</Link>
						). A key acts as you, with your roles; its scopes can only narrow that. Revoke a key you no longer use.
					</>
				}
			/>
			{actionData?.created ? (
				<section
					role="status"
					aria-labelledby="new-key-heading"
					className="border-accent bg-accent-soft mb-6 rounded-lg border p-4"
				>
					<h2 id="new-key-heading" className="font-bold">
						Key “{actionData.created.name}” created
					</h2>
					<p className="mt-1 text-sm">Copy it now: it is shown only this once and cannot be recovered.</p>
					<div className="mt-2 flex flex-wrap items-center gap-3">
						<code
							data-testid="new-api-key"
							className="bg-sheet min-w-0 flex-1 rounded px-3 py-2 text-sm break-all select-all"
						>
							{actionData.created.token}
						</code>
						<CopyButton text={actionData.created.token} label="Copy key" />
					</div>
				</section>
			) : null}
			<FormErrors errors={errors[''] ?? undefined} />
			{loaderData.keys.length === 0 ? (
				<EmptyState title="You have no API keys yet">
					Create one below for each script or instrument, so that you can revoke one without stopping the others.
				</EmptyState>
			) : (
				<ListTable headers={['Name', 'Key', 'Scopes', 'Created', 'Last used', 'Status', '']}>
					{loaderData.keys.map((key) => (
						<tr key={key.id} className="border-rule border-b last:border-0" data-testid="api-key-row">
							<td className="px-3 py-2">{key.name}</td>
							<td className="px-3 py-2 font-mono text-xs">{key.prefix}…</td>
							<td className="px-3 py-2">{key.scopes.join(', ')}</td>
							<td className="px-3 py-2 tabular-nums">{formatUtc(key.createdAt)}</td>
							<td className="px-3 py-2 tabular-nums">{key.lastUsedAt ? formatUtc(key.lastUsedAt) : 'never'}</td>
							<td className="px-3 py-2">
								<StatusBadge tone={key.revokedAt ? 'neutral' : 'good'}>
									{key.revokedAt ? 'revoked' : 'active'}
								</StatusBadge>
							</td>
							<td className="px-3 py-2">
								{key.revokedAt ? null : (
									<Form method="post">
										<input type="hidden" name="intent" value="revoke" />
										<input type="hidden" name="keyId" value={key.id} />
										<Button type="submit" size="sm" variant="quiet">
											Revoke <span className="sr-only">{key.name}</span>
										</Button>
									</Form>
								)}
							</td>
						</tr>
					))}
				</ListTable>
			)}
			<Form
				ref={createForm}
				method="post"
				className="bg-sheet border-rule mt-6 max-w-xl space-y-4 rounded-lg border p-6"
			>
				<h2 className="text-lg font-bold">Create a key</h2>
				<input type="hidden" name="intent" value="create" />
				<div>
					<label htmlFor="api-key-name" className="mb-1 block text-sm font-medium">
						Name
					</label>
					<input
						id="api-key-name"
						name="name"
						className={inputClass}
						aria-invalid={errors.name ? true : undefined}
						aria-describedby={errors.name ? 'api-key-name-error' : undefined}
					/>
					{errors.name ? (
						<p id="api-key-name-error" className="text-danger mt-1 text-sm">
							{errors.name.join(' ')}
						</p>
					) : null}
				</div>
				<fieldset aria-describedby={errors.scopes ? 'api-key-scopes-error' : undefined}>
					<legend className="mb-1 text-sm font-medium">Scopes</legend>
					{loaderData.allowedScopes.map((scope) => (
						<label key={scope} className="mr-4 inline-flex items-center gap-2 text-sm">
							<input type="checkbox" name="scopes" value={scope} defaultChecked={scope === 'read'} />
							{scope === 'read' ? 'read (GET)' : 'write (upload spectra, run comparisons)'}
						</label>
					))}
					{errors.scopes ? (
						<p id="api-key-scopes-error" className="text-danger mt-1 text-sm">
							{errors.scopes.join(' ')}
						</p>
					) : null}
				</fieldset>
				<Button type="submit" disabled={navigation.state === 'submitting'}>
					Create key
				</Button>
			</Form>
		</>
	)
}

export function meta() {
	return [{ title: 'API keys · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
