/** The heading block at the top of every signed-in page. */
export function PageHeader({
	title,
	description,
	actions,
}: {
	title: string
	description?: React.ReactNode
	actions?: React.ReactNode
}) {
	return (
		<header className="border-rule mb-6 flex flex-wrap items-end justify-between gap-4 border-b pb-4">
			<div>
				<h1 className="text-2xl font-bold">{title}</h1>
				{description ? <p className="text-ink-soft mt-1 max-w-3xl text-sm">{description}</p> : null}
			</div>
			{actions ? <div className="flex items-center gap-2">{actions}</div> : null}
		</header>
	)
}
