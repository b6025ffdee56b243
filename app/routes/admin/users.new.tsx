import { getFormProps, getInputProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { data, Form, Link, useNavigation } from 'react-router'
import type { z } from 'zod'
import type { Route } from './+types/users.new'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { createUser } from '#app/.server/services/users.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { Field, FormErrors } from '#app/components/forms.tsx'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { RoleCheckboxes } from '#app/components/role-checkboxes.tsx'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { CreateUserSchema } from '#shared/authz/user-schema.ts'

export function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'user:manage')
	return null
}

export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'user:manage')
	const submission = parseWithZod(await request.formData(), { schema: CreateUserSchema })
	if (submission.status !== 'success')
		return data({ result: submission.reply({ hideFields: ['password'] }) }, { status: 400 })
	const outcome = await createUser(db, { actor, values: submission.value, now: new Date() })
	if (!outcome.ok) {
		return data(
			{ result: submission.reply({ fieldErrors: { email: [outcome.error.message] }, hideFields: ['password'] }) },
			{ status: outcome.error.status },
		)
	}
	return redirectWithToast(`/admin/users/${outcome.value.id}`, {
		kind: 'success',
		title: 'Account created',
		description: `${submission.value.name} can now sign in with the initial password you set.`,
	})
}

export default function NewUser({ actionData }: Route.ComponentProps) {
	const navigation = useNavigation()
	const [form, fields] = useForm<z.input<typeof CreateUserSchema>>({
		lastResult: actionData?.result,
		defaultValue: { timeZone: 'UTC' },
		// Validated on the server only: the role checkboxes are a group that client-side checks report poorly.
	})
	const chosenRoles = (fields.roles.value as Array<string> | string | undefined) ?? []
	return (
		<>
			<PageHeader
				title="Create an account"
				description="One account per person. Tell them the initial password by a separate channel."
			/>
			<Form
				method="post"
				{...getFormProps(form)}
				className="bg-sheet border-rule max-w-3xl space-y-5 rounded-lg border p-6"
			>
				<FormErrors id={form.errorId} errors={form.errors} />
				<div className="grid gap-5 md:grid-cols-2">
					<Field
						label="Full name"
						hint="As it should print on signatures"
						errors={fields.name.errors}
						inputProps={getInputProps(fields.name, { type: 'text' })}
					/>
					<Field
						label="E-mail"
						errors={fields.email.errors}
						inputProps={getInputProps(fields.email, { type: 'email' })}
					/>
					<Field
						label="Initial password"
						hint="At least 10 characters"
						errors={fields.password.errors}
						inputProps={{ ...getInputProps(fields.password, { type: 'password' }), autoComplete: 'new-password' }}
					/>
					<Field
						label="Time zone"
						hint="For showing signature times, e.g. Europe/Dublin"
						errors={fields.timeZone.errors}
						inputProps={getInputProps(fields.timeZone, { type: 'text' })}
					/>
				</div>
				<RoleCheckboxes
					key={form.key}
					name={fields.roles.name}
					defaultRoles={Array.isArray(chosenRoles) ? chosenRoles : [chosenRoles]}
					errors={fields.roles.errors}
					errorId={fields.roles.errorId}
				/>
				<div className="flex gap-3">
					<Button type="submit" disabled={navigation.state === 'submitting'}>
						Create account
					</Button>
					<Link to="/admin/users" className={buttonVariants({ variant: 'secondary' })}>
						Cancel
					</Link>
				</div>
			</Form>
		</>
	)
}

export function meta() {
	return [{ title: 'Create an account · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
