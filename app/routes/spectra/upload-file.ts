import { z } from 'zod'
import type { Route } from './+types/upload-file'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { storeSpectrumFile } from '#app/.server/services/spectra.ts'
import { parseUpload } from '#app/.server/uploads.ts'
import { SpectrumMetadataSchema } from '#shared/spectra/spectrum-metadata-schema.ts'

// One file per request: the upload page sends a batch file by file, so it can show progress and so one
// refused file never holds back the others. Answers JSON with the outcome for that file.
export async function action({ request, context }: Route.ActionArgs) {
	const actor = authorize(context, 'spectrum:upload')
	const formData = await parseUpload(request)
	const file = formData.get('file')
	if (!(file instanceof File))
		return Response.json({ status: 'failed', fileName: '', message: 'No file was sent.' }, { status: 400 })
	// Empty fields mean "not given", as the page's own form treats them.
	const fields = Object.fromEntries(
		[...formData.entries()].filter(([, value]) => typeof value === 'string' && value.trim() !== ''),
	)
	const metadata = SpectrumMetadataSchema.safeParse(fields)
	if (!metadata.success) {
		return Response.json(
			{ status: 'failed', fileName: file.name, message: z.prettifyError(metadata.error) },
			{ status: 400 },
		)
	}
	const outcome = await storeSpectrumFile(db, {
		actor,
		fileName: file.name,
		bytes: new Uint8Array(await file.arrayBuffer()),
		metadata: metadata.data,
		now: new Date(),
	})
	return Response.json(outcome, { status: outcome.status === 'failed' ? 422 : outcome.status === 'stored' ? 201 : 200 })
}
