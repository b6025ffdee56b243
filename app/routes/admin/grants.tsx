import { parseWithZod } from '@conform-to/zod/v4'
import { asc } from 'drizzle-orm'
import { data, Form, useNavigation } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/grants'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { specifications } from '#app/.server/db/schema/specifications.ts'
import {
	createGrant,
	CreateGrantSchema,
	listGrants,
	listInspectors,
	revokeGrant,
} from '#app/.server/services/grants.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { FormErrors, inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { ListTable } from '#app/components/ui/list-table.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'

const GrantActionSchema = z.discriminatedUnion('intent', [
	z.object({ intent: z.literal('revoke'), grantId: z.string().uuid() }),
	z.object({ intent: z.literal('create') }).passthrough(),
])

export async function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'grant:manage')
	const [grants, inspectors, specs] = await Promise.all([
		listGrants(db, new Date()),
		listInspectors(db),
		db
			.select({ id: specifications.id, documentNumber: specifications.documentNumber, title: specifications.title })
			.from(specifications)
			.orderBy(asc(specifications.documentNumber)),
	])
	return { grants, inspectors, specifications: specs }
}

export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'grant:manage')
	const formData = await request.formData()
	const intent = GrantActionSchema.safeParse({
		intent: formData.get('intent'),
		grantId: formData.get('grantId') ?? undefined,
	})
	if (intent.success && intent.data.intent === 'revoke') {
		const outcome = await revokeGrant(db, { actor, grantId: intent.data.grantId, now: new Date() })
		if (!outcome.ok) return data({ result: null, message: outcome.error.message }, { status: outcome.error.status })
		return redirectWithToast('/admin/grants', { kind: 'success', title: 'Grant revoked' })
	}
	const submission = parseWithZod(formData, { schema: CreateGrantSchema })
	if (submission.status !== 'success') return data({ result: submission.reply(), message: null }, { status: 400 })
	const outcome = await createGrant(db, { actor, values: submission.value, now: new Date() })
	if (!outcome.ok)
		return data(
			{ result: submission.reply({ formErrors: [outcome.error.message] }), message: null },
			{ status: outcome.error.status },
		)
	return redirectWithToast('/admin/grants', { kind: 'success', title: 'Access granted' })
}

const STATUS_TONE = { current: 'good', scheduled: 'caution', ended: 'neutral', revoked: 'neutral' } as const

export default function Grants({ loaderData, actionData }: Route.ComponentProps) {
	const navigation = useNavigation()
	const errors = actionData?.result?.error ?? {}
	const today = new Date().toISOString().slice(0, 10)
	return (
		<>
			<PageHeader
				title="Access grants"
				description="Read-only, time-boxed access of inspectors to released versions, their dossiers and audit extracts. A grant ends by itself at its end date."
			/>
			{actionData?.message ? <FormErrors errors={[actionData.message]} /> : null}
			<ListTable headers={['Inspector', 'For', 'Covers', 'Starts', 'Ends', 'Status', '']}>
				{loaderData.grants.map((grant) => (
					<tr key={grant.id} className="border-rule border-b last:border-0" data-testid="grant-row">
						<td className="px-3 py-2">{grant.inspectorName}</td>
						<td className="px-3 py-2">{grant.purpose}</td>
						<td className="px-3 py-2">{grant.covers}</td>
						<td className="px-3 py-2 tabular-nums">{formatUtc(grant.startsAt)}</td>
						<td className="px-3 py-2 tabular-nums">{formatUtc(grant.endsAt)}</td>
						<td className="px-3 py-2">
							<StatusBadge tone={STATUS_TONE[grant.status]}>{grant.status}</StatusBadge>
						</td>
						<td className="px-3 py-2">
							{grant.status === 'current' || grant.status === 'scheduled' ? (
								<Form method="post">
									<input type="hidden" name="intent" value="revoke" />
									<input type="hidden" name="grantId" value={grant.id} />
									<Button type="submit" size="sm" variant="quiet">
										Revoke
									</Button>
								</Form>
							) : null}
						</td>
					</tr>
				))}
			</ListTable>
			<Form method="post" className="bg-sheet border-rule mt-6 max-w-3xl space-y-4 rounded-lg border p-6">
				<h2 className="text-lg font-bold">Grant access</h2>
				<FormErrors errors={errors[''] ?? undefined} />
				<input type="hidden" name="intent" value="create" />
				<div className="grid gap-4 md:grid-cols-2">
					<div>
						<label htmlFor="grant-inspector" className="mb-1 block text-sm font-medium">
							Inspector
						</label>
						<select
							id="grant-inspector"
							name="inspectorId"
							className={inputClass}
							aria-describedby={errors.inspectorId ? 'grant-inspector-error' : undefined}
						>
							<option value="">Choose…</option>
							{loaderData.inspectors.map((inspector) => (
								<option key={inspector.id} value={inspector.id}>
									{inspector.name} ({inspector.email})
								</option>
							))}
						</select>
						{errors.inspectorId ? (
							<p id="grant-inspector-error" className="text-danger mt-1 text-sm">
								{errors.inspectorId.join(' ')}
							</p>
						) : null}
					</div>
					<div>
						<label htmlFor="grant-purpose" className="mb-1 block text-sm font-medium">
							For
						</label>
						<input
							id="grant-purpose"
							name="purpose"
							placeholder="e.g. Regulatory inspection, December 2026"
							className={inputClass}
							aria-describedby={errors.purpose ? 'grant-purpose-error' : undefined}
						/>
						{errors.purpose ? (
							<p id="grant-purpose-error" className="text-danger mt-1 text-sm">
								{errors.purpose.join(' ')}
							</p>
						) : null}
					</div>
					<div>
						<label htmlFor="grant-from" className="mb-1 block text-sm font-medium">
							From (UTC date)
						</label>
						<input id="grant-from" type="date" name="startsAt" defaultValue={today} className={inputClass} />
					</div>
					<div>
						<label htmlFor="grant-until" className="mb-1 block text-sm font-medium">
							Until, inclusive (UTC date)
						</label>
						<input
							id="grant-until"
							type="date"
							name="endsAt"
							className={inputClass}
							aria-describedby={errors.endsAt ? 'grant-until-error' : undefined}
						/>
						{errors.endsAt ? (
							<p id="grant-until-error" className="text-danger mt-1 text-sm">
								{errors.endsAt.join(' ')}
							</p>
						) : null}
					</div>
				</div>
				<fieldset>
					<legend className="mb-1 text-sm font-medium">Covers</legend>
					<label className="mr-4 text-sm">
						<input type="radio" name="scope" value="chosen" defaultChecked className="accent-accent mr-1" />
						Chosen specifications
					</label>
					<label className="text-sm">
						<input type="radio" name="scope" value="all" className="accent-accent mr-1" />
						All specifications
					</label>
					<div className="mt-2 grid gap-1 sm:grid-cols-2">
						{loaderData.specifications.map((spec) => (
							<label key={spec.id} className="text-sm">
								<input type="checkbox" name="specificationIds" value={spec.id} className="accent-accent mr-1" />
								{spec.documentNumber} · {spec.title}
							</label>
						))}
					</div>
					{errors.specificationIds ? (
						<p className="text-danger mt-1 text-sm">{errors.specificationIds.join(' ')}</p>
					) : null}
				</fieldset>
				<Button type="submit" disabled={navigation.state === 'submitting'}>
					Grant access
				</Button>
			</Form>
		</>
	)
}

export function meta() {
	return [{ title: 'Access grants · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
