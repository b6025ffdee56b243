import { createCookie, redirect } from 'react-router'
import { ToastSchema, type Toast } from '#app/utils/toast-schema.ts'

const toastCookie = createCookie('bandproof_toast', { path: '/', httpOnly: true, sameSite: 'lax', maxAge: 60 })

/** Post/redirect/get with a one-time confirmation shown on the next page. */
export async function redirectWithToast(url: string, toast: Toast, init?: ResponseInit): Promise<Response> {
	const headers = new Headers(init?.headers)
	headers.append('Set-Cookie', await toastCookie.serialize(ToastSchema.parse(toast)))
	return redirect(url, { ...init, headers })
}

/** Reads the pending toast (if any) and the header that clears it. */
export async function takeToast(request: Request): Promise<{ toast: Toast | null; headers: Headers }> {
	const raw: unknown = await toastCookie.parse(request.headers.get('Cookie'))
	const headers = new Headers()
	if (raw === null || raw === undefined) return { toast: null, headers }
	headers.append('Set-Cookie', await toastCookie.serialize('', { maxAge: 0 }))
	const parsed = ToastSchema.safeParse(raw)
	return { toast: parsed.success ? parsed.data : null, headers }
}
