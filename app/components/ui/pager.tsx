import { Link, useSearchParams } from 'react-router'
import { cn } from '#app/utils/misc.ts'

/** Previous/next links that keep the other query parameters. */
export function Pager({
	page,
	pageCount,
	total,
	noun,
	plural,
}: {
	page: number
	pageCount: number
	total: number
	noun: string
	plural?: string
}) {
	const [searchParams] = useSearchParams()
	const linkTo = (target: number) => {
		const next = new URLSearchParams(searchParams)
		next.set('page', String(target))
		return `?${next.toString()}`
	}
	const linkClass = 'rounded-md border border-rule-strong bg-sheet px-3 py-1.5 text-sm'
	return (
		<nav aria-label="Pages" className="mt-4 flex items-center justify-between text-sm">
			<p className="text-ink-soft">
				{total} {total === 1 ? noun : (plural ?? `${noun}s`)} · page {page} of {pageCount}
			</p>
			<div className="flex gap-2">
				{page > 1 ? (
					<Link to={linkTo(page - 1)} className={linkClass} rel="prev">
						Previous
					</Link>
				) : (
					<span className={cn(linkClass, 'opacity-40')} aria-disabled="true">
						Previous
					</span>
				)}
				{page < pageCount ? (
					<Link to={linkTo(page + 1)} className={linkClass} rel="next">
						Next
					</Link>
				) : (
					<span className={cn(linkClass, 'opacity-40')} aria-disabled="true">
						Next
					</span>
				)}
			</div>
		</nav>
	)
}

/** A column heading that sorts the table by its key; a second click reverses the order. */
export function SortHeader({
	label,
	sortKey,
	current,
	dir,
}: {
	label: string
	sortKey: string
	current: string
	dir: 'asc' | 'desc'
}) {
	const [searchParams] = useSearchParams()
	const next = new URLSearchParams(searchParams)
	const active = current === sortKey
	next.set('sort', sortKey)
	next.set('dir', active && dir === 'asc' ? 'desc' : 'asc')
	next.delete('page')
	return (
		<th
			scope="col"
			aria-sort={active ? (dir === 'asc' ? 'ascending' : 'descending') : 'none'}
			className="px-3 py-2 text-left font-semibold"
		>
			<Link to={`?${next.toString()}`} className="hover:text-accent inline-flex items-center gap-1">
				{label}
				<span aria-hidden="true" className="text-ink-faint text-xs">
					{active ? (dir === 'asc' ? '▲' : '▼') : ''}
				</span>
			</Link>
		</th>
	)
}
