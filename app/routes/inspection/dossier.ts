import { data } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/dossier'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { getDossier, inspectionCopyLine } from '#app/.server/services/dossiers.ts'
import { inspectorAccess } from '#app/.server/services/grants.ts'

const CONTENT_TYPES = {
	pdf: 'application/pdf',
	docx: 'application/vnd.openxmlformats-officedocument.wordprocessingml.document',
} as const

/** An inspector's own copy of a released dossier, with the "issued to … for inspection" line; recorded in the audit trail. */
export async function loader({ context, params, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'inspection:read')
	const format = z.enum(['pdf', 'docx']).safeParse(params.format)
	if (!format.success) throw data({ message: 'Dossiers come as pdf or docx.' }, { status: 404 })
	const now = new Date()
	const access = await inspectorAccess(db, actor.id, params.versionId, now)
	if (!access)
		throw data({ message: 'Your access grant does not cover this version, or it has ended.' }, { status: 403 })
	const inspectionLine = inspectionCopyLine(actor, access, now)
	const file = await getDossier(db, {
		actor,
		versionId: params.versionId,
		format: format.data,
		now,
		ipAddress: clientAddress(request),
		purpose: 'download',
		inspectionLine,
	})
	if (!file) throw data({ message: 'No such version.' }, { status: 404 })
	return new Response(new Uint8Array(file.bytes), {
		headers: {
			'Content-Type': CONTENT_TYPES[format.data],
			'Content-Disposition': `attachment; filename="${file.fileName}"`,
			'Cache-Control': 'private, no-store',
		},
	})
}
