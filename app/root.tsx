// First: configures zod in the browser before any module below builds a schema (see the module).
import '#app/utils/zod-in-the-browser.ts'
import { Links, Meta, Outlet, Scripts, ScrollRestoration, data } from 'react-router'
import type { Route } from './+types/root'
import {
	apiProblemMiddleware,
	requestGuardMiddleware,
	securityHeadersMiddleware,
} from '#app/.server/security/middleware.ts'
import { takeToast } from '#app/.server/toast.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { ToastNotice } from '#app/components/toast-notice.tsx'
import { useNonce } from '#app/utils/nonce.ts'
import './app.css'

// Every request, pages, data requests and resource routes alike: security headers on the way out (outermost, so
// refusals and error pages get them too), then the cross-site and body-size guards.
export const middleware: Array<Route.MiddlewareFunction> = [
	securityHeadersMiddleware,
	apiProblemMiddleware,
	requestGuardMiddleware,
]

export async function loader({ request }: Route.LoaderArgs) {
	const { toast, headers } = await takeToast(request)
	return data({ toast }, { headers })
}

export function Layout({ children }: { children: React.ReactNode }) {
	const nonce = useNonce()
	return (
		<html lang="en">
			<head>
				<meta charSet="utf-8" />
				<meta name="viewport" content="width=device-width, initial-scale=1" />
				<link rel="icon" href="/favicon.svg" type="image/svg+xml" />
				<Meta />
				<Links />
			</head>
			<body className="min-h-screen">
				{children}
				<ScrollRestoration nonce={nonce} />
				<Scripts nonce={nonce} />
			</body>
		</html>
	)
}

export default function App({ loaderData }: Route.ComponentProps) {
	return (
		<>
			<Outlet />
			<ToastNotice toast={loaderData.toast} />
		</>
	)
}

export function meta() {
	return [{ title: 'Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
