import { z } from 'zod'
import { ApiProblem } from '#app/.server/problem.ts'
import { apiRoute } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { storeSpectrumFile } from '#app/.server/services/spectra.ts'
import { parseUpload } from '#app/.server/uploads.ts'
import { SpectrumMetadataSchema } from '#shared/spectra/spectrum-metadata-schema.ts'

// One spectrum file per request, as multipart/form-data: `file` plus the optional metadata fields of the upload page.
export const action = apiRoute({ scope: 'write', permission: 'spectrum:upload' }, async ({ request, actor, now }) => {
	if (!(request.headers.get('Content-Type') ?? '').toLowerCase().startsWith('multipart/form-data'))
		throw new ApiProblem(415, 'Send the spectrum as multipart/form-data with a "file" field.')
	const formData = await parseUpload(request)
	const file = formData.get('file')
	if (!(file instanceof File)) throw new ApiProblem(400, 'The form has no "file" field with a file in it.')
	const fields = Object.fromEntries(
		[...formData.entries()].filter(([, value]) => typeof value === 'string' && value.trim() !== ''),
	)
	const metadata = SpectrumMetadataSchema.safeParse(fields)
	if (!metadata.success) throw new ApiProblem(400, `The metadata is not valid: ${z.prettifyError(metadata.error)}`)
	const outcome = await storeSpectrumFile(db, {
		actor,
		fileName: file.name,
		bytes: new Uint8Array(await file.arrayBuffer()),
		metadata: metadata.data,
		now,
	})
	if (outcome.status === 'failed') throw new ApiProblem(422, outcome.message, { fileName: outcome.fileName })
	return Response.json(outcome, { status: outcome.status === 'stored' ? 201 : 200 })
})
