import { Link } from 'react-router'

const HEADINGS: Record<number, string> = {
	400: 'The request could not be understood',
	401: 'Please sign in',
	403: 'You do not have access to this page',
	404: 'Page not found',
	409: 'Someone else changed this first',
	413: 'That upload is too large',
	429: 'Too many attempts',
	500: 'Something went wrong',
}

/** The page shown for any error status. Never shows a stack trace unless `detail` is passed (development only). */
export function ErrorPage({ status, message, detail }: { status: number; message?: string; detail?: string }) {
	const heading = HEADINGS[status] ?? 'Something went wrong'
	const explanation =
		message ??
		(status === 404
			? 'There is no page at this address. Check the link, or start again from the overview.'
			: status === 403
				? 'Your roles do not include this area. If you need it, ask an administrator.'
				: 'Please try again. If it keeps happening, tell your system administrator.')
	return (
		<main className="mx-auto flex min-h-[60vh] max-w-xl flex-col justify-center px-6 py-16">
			<p className="text-ink-faint text-sm font-medium tracking-wide">Error {status}</p>
			<h1 className="mt-2 text-2xl font-bold">{heading}</h1>
			<p className="text-ink-soft mt-3">{explanation}</p>
			{detail ? (
				<pre className="bg-sheet border-rule mt-6 overflow-auto rounded border p-3 text-xs">{detail}</pre>
			) : null}
			<p className="mt-8">
				<Link to="/" className="text-accent font-medium underline underline-offset-4">
					Go to the overview
				</Link>
			</p>
		</main>
	)
}
