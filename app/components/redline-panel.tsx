import { Form, useNavigation } from 'react-router'
import { inputClass } from '#app/components/forms.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { FIELD_ANCHORS } from '#shared/specs/redline-anchors.ts'

type Thread = {
	id: string
	anchor: string
	anchorLabel: string
	body: string
	suggestedText: string | null
	canAcceptSuggestion: boolean
	status: 'open' | 'resolved'
	authorName: string
	createdAt: string
	resolverName: string | null
	resolution: string | null
	replies: Array<{ id: string; body: string; authorName: string; createdAt: string }>
}

/** Reviewers' redlines on a version: anchored to a field or band row, with suggested text the author can accept. */
export function RedlinePanel({
	threads,
	bands,
	canAdd,
	canAccept,
	canDiscuss,
}: {
	threads: Array<Thread>
	bands: Array<{ id: string; position: number }>
	canAdd: boolean
	canAccept: boolean
	canDiscuss: boolean
}) {
	const navigation = useNavigation()
	const busy = navigation.state === 'submitting'
	const open = threads.filter((thread) => thread.status === 'open').length
	return (
		<section aria-labelledby="redlines-heading" className="bg-sheet border-rule rounded-lg border p-5">
			<h2 id="redlines-heading" className="mb-1 text-lg font-bold">
				Redlines{' '}
				<span className="text-ink-faint text-sm font-normal">
					({open} open of {threads.length})
				</span>
			</h2>
			{open ? <p className="text-ink-soft mb-3 text-sm">A version with open redlines cannot be signed.</p> : null}
			{threads.length === 0 && !canAdd ? <p className="text-ink-soft text-sm">No redlines.</p> : null}
			<ul className="space-y-3">
				{threads.map((thread) => (
					<li key={thread.id} className="border-rule rounded-md border p-3 text-sm" data-testid="redline">
						<div className="flex flex-wrap items-center gap-2">
							<StatusBadge tone={thread.status === 'open' ? 'caution' : 'neutral'}>
								{thread.status === 'open' ? 'Open' : 'Resolved'}
							</StatusBadge>
							<span className="font-semibold">{thread.anchorLabel}</span>
							<span className="text-ink-faint ml-auto text-xs">
								{thread.authorName} · {formatUtc(thread.createdAt)}
							</span>
						</div>
						<p className="mt-2 whitespace-pre-line">{thread.body}</p>
						{thread.suggestedText !== null ? (
							<div className="border-accent bg-accent-soft mt-2 rounded-md border-l-4 px-3 py-2">
								<p className="text-ink-soft text-xs font-semibold">Suggested text</p>
								<p className="whitespace-pre-line">{thread.suggestedText}</p>
								{canAccept && thread.status === 'open' && thread.canAcceptSuggestion ? (
									<Form method="post" className="mt-2">
										<input type="hidden" name="intent" value="redline-accept" />
										<input type="hidden" name="redlineId" value={thread.id} />
										<Button type="submit" size="sm" disabled={busy}>
											Accept the suggestion
										</Button>
									</Form>
								) : null}
							</div>
						) : null}
						{thread.replies.map((reply) => (
							<p key={reply.id} className="border-rule text-ink-soft mt-2 border-l-2 pl-3">
								<span className="text-ink font-medium">{reply.authorName}:</span> {reply.body}
							</p>
						))}
						{thread.status === 'resolved' && thread.resolverName ? (
							<p className="text-ink-faint mt-2 text-xs">
								Resolved by {thread.resolverName}
								{thread.resolution ? `: ${thread.resolution}` : ''}
							</p>
						) : null}
						{canDiscuss ? (
							<div className="mt-2 flex flex-wrap items-end gap-2">
								<Form method="post" className="flex flex-1 gap-2">
									<input type="hidden" name="intent" value="redline-reply" />
									<input type="hidden" name="redlineId" value={thread.id} />
									<label htmlFor={`reply-${thread.id}`} className="sr-only">
										Reply
									</label>
									<input id={`reply-${thread.id}`} name="body" placeholder="Reply…" className={inputClass} />
									<Button type="submit" size="sm" variant="secondary" disabled={busy}>
										Reply
									</Button>
								</Form>
								<Form method="post">
									<input
										type="hidden"
										name="intent"
										value={thread.status === 'open' ? 'redline-resolve' : 'redline-reopen'}
									/>
									<input type="hidden" name="redlineId" value={thread.id} />
									<Button type="submit" size="sm" variant="quiet" disabled={busy}>
										{thread.status === 'open' ? 'Mark resolved' : 'Reopen'}
									</Button>
								</Form>
							</div>
						) : null}
					</li>
				))}
			</ul>
			{canAdd ? (
				<Form method="post" className="border-rule mt-4 space-y-2 border-t pt-4">
					<input type="hidden" name="intent" value="redline-add" />
					<h3 className="text-base font-semibold">Add a redline</h3>
					<div>
						<label htmlFor="redline-anchor" className="mb-1 block text-sm font-medium">
							About
						</label>
						<select id="redline-anchor" name="anchor" className={inputClass}>
							{Object.entries(FIELD_ANCHORS).map(([value, label]) => (
								<option key={value} value={value}>
									{label}
								</option>
							))}
							{bands.map((band) => (
								<option key={band.id} value={`band:${band.id}`}>
									Band {band.position} cm⁻¹
								</option>
							))}
						</select>
					</div>
					<div>
						<label htmlFor="redline-body" className="mb-1 block text-sm font-medium">
							Comment
						</label>
						<textarea id="redline-body" name="body" required className={`${inputClass} min-h-16`} />
					</div>
					<div>
						<label htmlFor="redline-suggestion" className="mb-1 block text-sm font-medium">
							Suggested replacement text (optional)
						</label>
						<textarea id="redline-suggestion" name="suggestedText" className={`${inputClass} min-h-16`} />
						<p className="text-ink-faint mt-1 text-xs">
							For a text field it replaces the whole field; for a band it replaces the assignment. The author accepts it
							in one click.
						</p>
					</div>
					<Button type="submit" disabled={busy}>
						Add redline
					</Button>
				</Form>
			) : null}
		</section>
	)
}
