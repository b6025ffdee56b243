import { isRouteErrorResponse, useRouteError } from 'react-router'
import { ErrorPage } from '#app/components/error-page.tsx'

/** Route-level error boundary: keeps the navigation around it and never shows a stack trace in production. */
export function GeneralErrorBoundary() {
	const error = useRouteError()
	if (isRouteErrorResponse(error)) return <ErrorPage status={error.status} message={messageOf(error.data)} />
	if (import.meta.env.DEV) console.error(error)
	const detail = import.meta.env.DEV && error instanceof Error ? error.stack : undefined
	return <ErrorPage status={500} detail={detail} />
}

function messageOf(payload: unknown): string | undefined {
	if (typeof payload === 'string') return payload
	if (payload && typeof payload === 'object' && 'message' in payload && typeof payload.message === 'string') {
		return payload.message
	}
	return undefined
}
