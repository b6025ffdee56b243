import { useEffect, useState } from 'react'
import type { Toast } from '#app/utils/toast-schema.ts'
import { cn } from '#app/utils/misc.ts'

/** A polite confirmation after a redirect; it fades after a few seconds and can be dismissed. */
export function ToastNotice({ toast }: { toast: Toast | null }) {
	const [visible, setVisible] = useState<Toast | null>(toast)
	useEffect(() => {
		setVisible(toast)
		if (!toast) return
		const timer = setTimeout(() => setVisible(null), 6000)
		return () => clearTimeout(timer)
	}, [toast])
	return (
		<div aria-live="polite" role="status" className="pointer-events-none fixed right-4 bottom-4 z-50">
			{visible ? (
				<div
					className={cn(
						'bg-sheet pointer-events-auto w-80 rounded-md border p-4 shadow-lg',
						visible.kind === 'error' ? 'border-danger' : 'border-accent',
					)}
				>
					<div className="flex items-start justify-between gap-3">
						<div>
							<p className="text-sm font-semibold">{visible.title}</p>
							{visible.description ? <p className="text-ink-soft mt-1 text-sm">{visible.description}</p> : null}
						</div>
						<button
							type="button"
							onClick={() => setVisible(null)}
							className="text-ink-faint hover:text-ink text-sm"
							aria-label="Dismiss"
						>
							×
						</button>
					</div>
				</div>
			) : null}
		</div>
	)
}
