import { Link } from 'react-router'
import type { Route } from './+types/queue'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listQueue, type QueueItem } from '#app/.server/queries/queue.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { EmptyState } from '#app/components/ui/empty-state.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'

export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'queue:read')
	return { items: await listQueue(db, actor) }
}

const TASK_LABELS: Record<QueueItem['task'], { text: string; tone: 'caution' | 'neutral' | 'danger' | 'good' }> = {
	approve: { text: 'Approve', tone: 'caution' },
	review: { text: 'Review', tone: 'caution' },
	'revise-after-rejection': { text: 'Revise', tone: 'danger' },
	'answer-redlines': { text: 'Answer redlines', tone: 'caution' },
	'finish-draft': { text: 'Finish draft', tone: 'neutral' },
}

export default function Queue({ loaderData }: Route.ComponentProps) {
	const { items } = loaderData
	return (
		<>
			<PageHeader
				title="My queue"
				description="Versions that wait for you: drafts to finish or revise, versions to review, versions to approve."
			/>
			{items.length === 0 ? (
				<EmptyState title="Nothing waits for you">
					When a draft needs you, or a version is submitted for your review or approval, it appears here.
				</EmptyState>
			) : (
				<ul className="bg-sheet border-rule divide-rule divide-y rounded-lg border">
					{items.map((item) => (
						<li
							key={`${item.versionId}-${item.task}`}
							className="flex flex-wrap items-center gap-3 px-4 py-3 text-sm"
							data-testid="queue-item"
						>
							<StatusBadge tone={TASK_LABELS[item.task].tone}>{TASK_LABELS[item.task].text}</StatusBadge>
							<Link
								to={`/specifications/${item.specificationId}/versions/${item.versionId}`}
								className="text-accent font-medium underline-offset-4 hover:underline"
							>
								{item.documentNumber} v{item.versionNumber}
							</Link>
							<span>{item.title}</span>
							<span className="text-ink-soft">{item.detail}</span>
							<span className="text-ink-faint ml-auto tabular-nums">since {formatUtc(item.since)}</span>
						</li>
					))}
				</ul>
			)}
		</>
	)
}

export function meta() {
	return [{ title: 'My queue · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
