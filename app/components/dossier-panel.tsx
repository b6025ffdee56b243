import { useState } from 'react'
import { Link } from 'react-router'
import { Button, buttonVariants } from '#app/components/ui/button.tsx'

/**
 * The version's dossier: a preview of the PDF in the page and both downloads. Signed versions get the stored,
 * byte-identical controlled copy; drafts are rendered on demand with a DRAFT mark on every page. Versions that
 * identity runs test against (effective and later) also offer the PDF with the appendix of verified runs.
 */
export function DossierPanel({ base, stored, withRuns }: { base: string; stored: boolean; withRuns: boolean }) {
	const [preview, setPreview] = useState(false)
	const [loading, setLoading] = useState(false)
	return (
		<section aria-labelledby="dossier-heading" className="bg-sheet border-rule rounded-lg border p-5">
			<div className="flex flex-wrap items-center justify-between gap-3">
				<div>
					<h2 id="dossier-heading" className="text-lg font-bold">
						Dossier
					</h2>
					<p className="text-ink-soft text-sm">
						{stored
							? 'The controlled dossier of this version: rendered once and stored, so every download is the same file.'
							: 'Rendered on demand from the current draft; every page carries a DRAFT mark. It is not a controlled copy.'}
					</p>
				</div>
				<div className="flex flex-wrap gap-2">
					<Button
						variant="secondary"
						onClick={() => {
							setPreview((shown) => !shown)
							setLoading(true)
						}}
						aria-expanded={preview}
					>
						{preview ? 'Hide the preview' : 'Preview'}
					</Button>
					<a href={`${base}/dossier/pdf`} className={buttonVariants()} download>
						Download PDF
					</a>
					<a href={`${base}/dossier/docx`} className={buttonVariants({ variant: 'secondary' })} download>
						Download DOCX
					</a>
					{withRuns ? (
						<a href={`${base}/dossier/pdf?runs=include`} className={buttonVariants({ variant: 'secondary' })} download>
							Dossier with identity runs
						</a>
					) : null}
					<Link to="/verify" className={buttonVariants({ variant: 'quiet' })}>
						Verify a copy
					</Link>
				</div>
			</div>
			{preview ? (
				<div className="mt-4">
					{loading ? (
						<p className="text-ink-soft mb-2 text-sm" role="status">
							Preparing the dossier… the first rendering of a version can take a few seconds.
						</p>
					) : null}
					<iframe
						title="Dossier preview"
						src={`${base}/dossier/pdf?inline=1`}
						onLoad={() => setLoading(false)}
						className="border-rule h-[80vh] w-full rounded border"
					/>
				</div>
			) : null}
		</section>
	)
}
