import { Links, Meta, Outlet, Scripts, ScrollRestoration, data } from 'react-router'
import type { Route } from './+types/root'
import { takeToast } from '#app/.server/toast.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { ToastNotice } from '#app/components/toast-notice.tsx'
import './app.css'

export async function loader({ request }: Route.LoaderArgs) {
	const { toast, headers } = await takeToast(request)
	return data({ toast }, { headers })
}

export function Layout({ children }: { children: React.ReactNode }) {
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
				<ScrollRestoration />
				<Scripts />
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
