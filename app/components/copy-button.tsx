import { useState, useSyncExternalStore } from 'react'
import { Button } from '#app/components/ui/button.tsx'

const subscribeToNothing = () => () => {}

/**
 * Copies a text to the clipboard. Rendered only once the page runs JavaScript in a context that has a clipboard
 * (a secure context): without it the text stays on screen for the person to select, and no dead button is shown.
 */
export function CopyButton({ text, label }: { text: string; label: string }) {
	const canCopy = useSyncExternalStore(
		subscribeToNothing,
		() => typeof navigator.clipboard?.writeText === 'function',
		() => false,
	)
	const [state, setState] = useState<'idle' | 'copied' | 'failed'>('idle')
	if (!canCopy) return null
	return (
		<span className="inline-flex items-center gap-2">
			<Button
				size="sm"
				variant="secondary"
				onClick={() => {
					navigator.clipboard.writeText(text).then(
						() => setState('copied'),
						() => setState('failed'),
					)
				}}
			>
				{label}
			</Button>
			<span role="status" className="text-ink-soft text-xs">
				{state === 'copied' ? 'Copied' : state === 'failed' ? 'Could not copy: select the text instead' : ''}
			</span>
		</span>
	)
}
