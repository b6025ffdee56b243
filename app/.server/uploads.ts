import { MaxFileSizeExceededError, MaxFilesExceededError, parseFormData } from '@remix-run/form-data-parser'
import { data } from 'react-router'
import { MAX_SPECTRUM_FILE_BYTES } from '#app/.server/services/spectra.ts'
import { parseContainerOverrides } from '#shared/runs/container-mapping.ts'
import { MAX_CONTAINERS_PER_RUN } from '#shared/runs/forms.ts'

/** Most files accepted in one request of the plain (no-JavaScript) upload form. */
export const MAX_FILES_PER_REQUEST = 50

/**
 * Parses a multipart upload as a stream with per-file and per-request limits. Over a limit, answers 413
 * with a message that says what to do; nothing of the request is kept.
 */
export async function parseUpload(request: Request, options: { maxFiles?: number } = {}): Promise<FormData> {
	const maxFiles = options.maxFiles ?? MAX_FILES_PER_REQUEST
	try {
		return await parseFormData(
			request,
			{ maxFileSize: MAX_SPECTRUM_FILE_BYTES, maxFiles, maxHeaderSize: 8 * 1024 },
			(file) => file,
		)
	} catch (error) {
		if (error instanceof MaxFileSizeExceededError) {
			throw data(
				{
					message: `A file is larger than ${MAX_SPECTRUM_FILE_BYTES / 1024 / 1024} MB, the most the library takes. Nothing was stored; remove that file and upload again.`,
				},
				{ status: 413 },
			)
		}
		if (error instanceof MaxFilesExceededError) {
			throw data({ message: `Upload at most ${maxFiles} files at a time. Nothing was stored.` }, { status: 413 })
		}
		throw error
	}
}

/** The sample files of an identity-run form (lot or retest) with the analyst's container corrections. */
export async function readRunUpload(request: Request) {
	const formData = await parseUpload(request, { maxFiles: MAX_CONTAINERS_PER_RUN + 10 })
	const chosen = formData.getAll('files').filter((value): value is File => value instanceof File && value.size > 0)
	const files = await Promise.all(
		chosen.map(async (file) => ({ fileName: file.name, bytes: new Uint8Array(await file.arrayBuffer()) })),
	)
	return { formData, files, overrides: parseContainerOverrides(formData.entries()) }
}
