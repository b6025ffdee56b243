import { data } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/dossier'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getVersionWorkspace } from '#app/.server/queries/specifications.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { getDossier } from '#app/.server/services/dossiers.ts'

const FormatSchema = z.enum(['pdf', 'docx'])
/** `?runs=include`: the stored variant with Appendix A, the verified identity runs against the version. */
const RunsParamSchema = z.enum(['include']).nullable()
const CONTENT_TYPES = {
	pdf: 'application/pdf',
	docx: 'application/vnd.openxmlformats-officedocument.wordprocessingml.document',
} as const

/**
 * The dossier file of a version: stored and byte-identical for signed versions, rendered with a DRAFT mark otherwise;
 * with `?runs=include`, the variant listing the identity runs (its own stored copy per set of runs).
 */
export async function loader({ context, params, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'spec:read')
	const format = FormatSchema.safeParse(params.format)
	if (!format.success) throw data({ message: 'Dossiers come as pdf or docx.' }, { status: 404 })
	if (!(await getVersionWorkspace(db, params.specId, params.versionId)))
		throw data({ message: 'No such version.' }, { status: 404 })
	const search = new URL(request.url).searchParams
	const runs = RunsParamSchema.safeParse(search.get('runs'))
	if (!runs.success) throw data({ message: 'The only choice for runs is runs=include.' }, { status: 400 })
	const inline = search.get('inline') === '1' && format.data === 'pdf'
	const file = await getDossier(db, {
		actor,
		versionId: params.versionId,
		format: format.data,
		now: new Date(),
		ipAddress: clientAddress(request),
		purpose: inline ? 'preview' : 'download',
		includeRuns: runs.data === 'include',
	})
	if (!file) throw data({ message: 'No such version.' }, { status: 404 })
	return new Response(new Uint8Array(file.bytes), {
		headers: {
			'Content-Type': CONTENT_TYPES[format.data],
			'Content-Disposition': `${inline ? 'inline' : 'attachment'}; filename="${file.fileName}"`,
			'X-Content-SHA256': file.sha256,
			'Cache-Control': 'private, no-store',
		},
	})
}
