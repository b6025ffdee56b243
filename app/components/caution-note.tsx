import { cn } from '#app/utils/misc.ts'

/** The standing caution of the product: spectral evidence supports, never replaces, the lab's own procedures. */
export function CautionNote({ className }: { className?: string }) {
	return (
		<aside
			aria-label="Caution"
			className={cn('border-caution bg-caution-soft text-ink rounded-md border-l-4 px-4 py-3 text-sm', className)}
		>
			<p className="font-semibold">An identity test protects patients.</p>
			<p className="text-ink-soft mt-1">
				A conforming spectral comparison supports, but does not replace, your laboratory's approved procedures. Release
				decisions rest with the responsible QA person under your local regulations. Functional-group suggestions are
				aids for writing band tables, not conclusions about identity.
			</p>
		</aside>
	)
}
