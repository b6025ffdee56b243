import { eq } from 'drizzle-orm'
import { data } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/$spectrumId.original'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { clientAddress, recordAudit } from '#app/.server/services/audit.ts'

/** The original file exactly as uploaded; every download is recorded in the audit trail. */
export async function loader({ context, params, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'spectrum:read')
	if (!z.uuid().safeParse(params.spectrumId).success) throw data({ message: 'No such spectrum.' }, { status: 404 })
	const [row] = await db
		.select({ fileName: spectra.fileName, bytes: spectra.originalBytes, sha256: spectra.sha256 })
		.from(spectra)
		.where(eq(spectra.id, params.spectrumId))
	if (!row) throw data({ message: 'No such spectrum.' }, { status: 404 })
	await recordAudit(db, {
		actor: { id: actor.id, label: actor.email },
		action: 'spectrum.downloaded',
		entityType: 'spectrum',
		entityId: params.spectrumId,
		after: { fileName: row.fileName, sha256: row.sha256 },
		ipAddress: clientAddress(request),
	})
	return new Response(new Uint8Array(row.bytes), {
		headers: {
			'Content-Type': 'application/octet-stream',
			'Content-Disposition': `attachment; filename="${row.fileName.replace(/["\\\r\n]/g, '_')}"`,
			'X-Content-SHA256': row.sha256,
		},
	})
}
