import { data } from 'react-router'
import { ErrorPage } from '#app/components/error-page.tsx'

export function loader() {
	throw data(
		{ message: 'There is no page at this address. Check the link, or start again from the overview.' },
		{ status: 404 },
	)
}

export default function NotFound() {
	return <ErrorPage status={404} />
}

export function ErrorBoundary() {
	return <ErrorPage status={404} />
}
