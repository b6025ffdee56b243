import { getFormProps, getInputProps, useForm } from '@conform-to/react'
import { parseWithZod } from '@conform-to/zod/v4'
import { APIError } from 'better-auth/api'
import { data, Form, redirect, useNavigation, useSearchParams } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/sign-in'
import { auth } from '#app/.server/auth.ts'
import { resolveActor } from '#app/.server/context.ts'
import { Field, FormErrors } from '#app/components/forms.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { safeRedirectPath } from '#app/utils/redirect.ts'

const SignInSchema = z.object({
	email: z.email({ message: 'Enter the e-mail address of your account' }).max(254).trim().toLowerCase(),
	password: z.string({ message: 'Enter your password' }).min(1, 'Enter your password').max(200),
	redirectTo: z.string().max(2000).optional(),
})

export async function loader({ request }: Route.LoaderArgs) {
	const actor = await resolveActor(request)
	if (actor) throw redirect(safeRedirectPath(new URL(request.url).searchParams.get('redirectTo')))
	return null
}

export async function action({ request }: Route.ActionArgs) {
	const formData = await request.formData()
	const submission = parseWithZod(formData, { schema: SignInSchema })
	if (submission.status !== 'success') {
		return data({ result: submission.reply({ hideFields: ['password'] }) }, { status: 400 })
	}
	const { email, password, redirectTo } = submission.value
	try {
		const { headers } = await auth().api.signInEmail({
			body: { email, password },
			headers: request.headers,
			returnHeaders: true,
		})
		return redirect(safeRedirectPath(redirectTo), { headers })
	} catch (error) {
		if (!(error instanceof APIError)) throw error
		if (error.body?.code === 'RATE_LIMITED') {
			// Too many attempts from this address or for this e-mail (app/.server/security/sign-in-limits.ts).
			const retryAfter = String(Number(error.body.retryAfterSeconds) || 60)
			return data(
				{
					result: submission.reply({
						formErrors: [error.body.message ?? 'Too many sign-in attempts.'],
						hideFields: ['password'],
					}),
				},
				{ status: 429, headers: { 'Retry-After': retryAfter } },
			)
		}
		const blocked = error.body?.code === 'ACCOUNT_BLOCKED'
		const message = blocked
			? (error.body?.message ?? 'This account cannot sign in.')
			: 'The e-mail or the password is not right. Repeated failures lock the account for a while.'
		return data(
			{ result: submission.reply({ formErrors: [message], hideFields: ['password'] }) },
			{ status: blocked ? 403 : 401 },
		)
	}
}

/** A refused attempt's Retry-After reaches the page's response too, next to what the root sets (its cookies). */
export function headers({ actionHeaders, parentHeaders }: Route.HeadersArgs) {
	const headers = new Headers(parentHeaders)
	const retryAfter = actionHeaders.get('Retry-After')
	if (retryAfter) headers.set('Retry-After', retryAfter)
	return headers
}

export default function SignIn({ actionData }: Route.ComponentProps) {
	const [searchParams] = useSearchParams()
	const navigation = useNavigation()
	const [form, fields] = useForm({
		lastResult: actionData?.result,
		onValidate: ({ formData }) => parseWithZod(formData, { schema: SignInSchema }),
		shouldValidate: 'onSubmit',
		shouldRevalidate: 'onInput',
	})
	return (
		<main className="flex min-h-screen items-center justify-center px-4">
			<div className="w-full max-w-sm">
				<div className="mb-8 text-center">
					<img src="/favicon.svg" alt="" className="mx-auto h-10 w-10" />
					<h1 className="mt-3 text-2xl font-bold">Bandproof</h1>
					<p className="text-ink-soft mt-1 text-sm">Identity-test dossiers with spectral evidence</p>
				</div>
				<Form
					method="post"
					{...getFormProps(form)}
					className="bg-sheet border-rule space-y-4 rounded-lg border p-6 shadow-sm"
				>
					<h2 className="text-lg font-bold">Sign in</h2>
					<FormErrors id={form.errorId} errors={form.errors} />
					<input type="hidden" name="redirectTo" value={searchParams.get('redirectTo') ?? ''} />
					<Field
						label="E-mail"
						errors={fields.email.errors}
						inputProps={{
							...getInputProps(fields.email, { type: 'email' }),
							autoComplete: 'username',
							autoFocus: true,
						}}
					/>
					<Field
						label="Password"
						errors={fields.password.errors}
						inputProps={{ ...getInputProps(fields.password, { type: 'password' }), autoComplete: 'current-password' }}
					/>
					<Button type="submit" className="w-full" disabled={navigation.state === 'submitting'}>
						{navigation.state === 'submitting' ? 'Signing in…' : 'Sign in'}
					</Button>
				</Form>
				<p className="text-ink-faint mt-6 text-center text-xs">
					Accounts are personal and are created by your administrator. Never share your password: your sign-in is your
					electronic signature.
				</p>
			</div>
		</main>
	)
}

export function meta() {
	return [{ title: 'Sign in · Bandproof' }]
}
