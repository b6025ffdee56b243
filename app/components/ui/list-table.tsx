import { cn } from '#app/utils/misc.ts'

type Header = string | { label: string; align: 'right' }

/** The framed table of a list page with its header row; rows come as children. */
export function ListTable({
	headers,
	children,
	caption,
	className,
	testId,
}: {
	headers: Array<Header>
	children: React.ReactNode
	caption?: string
	/** Spacing around the frame, e.g. 'mb-6'. */
	className?: string
	testId?: string
}) {
	return (
		<div className={cn('bg-sheet border-rule overflow-x-auto rounded-lg border', className)}>
			<table className="w-full text-sm" data-testid={testId}>
				{caption ? <caption className="sr-only">{caption}</caption> : null}
				<thead className="border-rule bg-paper border-b">
					<tr>
						{headers.map((header) => {
							const label = typeof header === 'string' ? header : header.label
							return (
								<th
									key={label}
									scope="col"
									className={cn('px-3 py-2 font-semibold', typeof header === 'string' ? 'text-left' : 'text-right')}
								>
									{label}
								</th>
							)
						})}
					</tr>
				</thead>
				<tbody>{children}</tbody>
			</table>
		</div>
	)
}
