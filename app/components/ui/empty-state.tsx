/** What an area shows when it holds nothing yet: what will be here, and what to do about it. */
export function EmptyState({ title, children }: { title: string; children?: React.ReactNode }) {
	return (
		<section className="border-rule-strong bg-sheet rounded-lg border border-dashed px-6 py-10 text-center">
			<h2 className="text-lg font-bold">{title}</h2>
			{children ? <div className="text-ink-soft mx-auto mt-2 max-w-xl text-sm">{children}</div> : null}
		</section>
	)
}
