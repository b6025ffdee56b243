import { parseWithZod } from '@conform-to/zod/v4'
import { data, Form, useNavigation } from 'react-router'
import type { Route } from './+types/users.$userId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getUser } from '#app/.server/queries/users.ts'
import { deactivateUser, reactivateUser, setUserRoles, unlockUser } from '#app/.server/services/users.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { FormErrors, inputClass } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { RoleCheckboxes } from '#app/components/role-checkboxes.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { UserAdminActionSchema } from '#shared/authz/user-schema.ts'

export async function loader({ context, params }: Route.LoaderArgs) {
	const actor = authorize(context, 'user:manage')
	const user = await getUser(db, params.userId, new Date())
	if (!user) throw data({ message: 'There is no account at this address.' }, { status: 404 })
	return { user, isSelf: user.id === actor.id }
}

export async function action({ request, context, params }: Route.ActionArgs) {
	const actor = authorize(context, 'user:manage')
	const submission = parseWithZod(await request.formData(), { schema: UserAdminActionSchema })
	if (submission.status !== 'success') return data({ result: submission.reply() }, { status: 400 })
	const base = { actor, userId: params.userId, now: new Date() }
	const value = submission.value
	const outcome =
		value.intent === 'set-roles'
			? await setUserRoles(db, { ...base, roles: value.roles })
			: value.intent === 'deactivate'
				? await deactivateUser(db, { ...base, reason: value.reason })
				: value.intent === 'reactivate'
					? await reactivateUser(db, base)
					: await unlockUser(db, base)
	if (!outcome.ok)
		return data({ result: submission.reply({ formErrors: [outcome.error.message] }) }, { status: outcome.error.status })
	const titles = {
		'set-roles': 'Roles saved',
		deactivate: 'Account deactivated',
		reactivate: 'Account reactivated',
		unlock: 'Account unlocked',
	} as const
	return redirectWithToast(`/admin/users/${params.userId}`, { kind: 'success', title: titles[value.intent] })
}

export default function UserPage({ loaderData, actionData }: Route.ComponentProps) {
	const { user, isSelf } = loaderData
	const navigation = useNavigation()
	const busy = navigation.state === 'submitting'
	const result = actionData?.result
	const roleErrors = result?.error?.roles ?? undefined
	const reasonErrors = result?.error?.reason ?? undefined
	return (
		<>
			<PageHeader
				title={user.name}
				description={
					<>
						{user.email} · time zone {user.timeZone} · created {formatUtc(user.createdAt)}
					</>
				}
				actions={
					<StatusBadge tone={user.status === 'active' ? 'good' : user.status === 'locked' ? 'caution' : 'neutral'}>
						{user.status === 'active'
							? 'Active'
							: user.status === 'locked'
								? `Locked until ${formatUtc(user.lockedUntil)}`
								: 'Deactivated'}
					</StatusBadge>
				}
			/>
			<FormErrors errors={result?.error?.[''] ?? undefined} />
			<div className="grid max-w-5xl gap-6 lg:grid-cols-[2fr_1fr]">
				<Form method="post" className="bg-sheet border-rule space-y-4 rounded-lg border p-6">
					<h2 className="text-lg font-bold">Roles</h2>
					<RoleCheckboxes name="roles" defaultRoles={user.roles} errors={roleErrors} errorId="roles-error" />
					<Button type="submit" name="intent" value="set-roles" disabled={busy}>
						Save roles
					</Button>
				</Form>
				<section className="bg-sheet border-rule space-y-4 rounded-lg border p-6">
					<h2 className="text-lg font-bold">Access</h2>
					{user.status === 'locked' ? (
						<Form method="post">
							<p className="text-ink-soft mb-2 text-sm">Locked after {user.failedSignIns} failed sign-ins.</p>
							<Button type="submit" name="intent" value="unlock" variant="secondary" disabled={busy}>
								Unlock now
							</Button>
						</Form>
					) : null}
					{user.deactivatedAt ? (
						<Form method="post">
							<p className="text-ink-soft mb-2 text-sm">Deactivated {formatUtc(user.deactivatedAt)}.</p>
							<Button type="submit" name="intent" value="reactivate" variant="secondary" disabled={busy}>
								Reactivate
							</Button>
						</Form>
					) : isSelf ? (
						<p className="text-ink-soft text-sm">This is your own account; another administrator can deactivate it.</p>
					) : (
						<Form method="post" className="space-y-2">
							<label htmlFor="deactivate-reason" className="block text-sm font-medium">
								Reason for deactivation
							</label>
							<input
								id="deactivate-reason"
								name="reason"
								className={inputClass}
								aria-invalid={reasonErrors ? true : undefined}
								aria-describedby={reasonErrors ? 'deactivate-reason-error' : undefined}
								placeholder="e.g. left the company"
							/>
							{reasonErrors ? (
								<p id="deactivate-reason-error" className="text-danger text-sm">
									{reasonErrors.join(' ')}
								</p>
							) : null}
							<Button type="submit" name="intent" value="deactivate" variant="danger" disabled={busy}>
								Deactivate account
							</Button>
							<p className="text-ink-faint text-xs">
								The person is signed out at once. Their name stays on every record.
							</p>
						</Form>
					)}
				</section>
			</div>
		</>
	)
}

export function meta({ loaderData }: Route.MetaArgs) {
	return [{ title: `${loaderData?.user.name ?? 'Account'} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
