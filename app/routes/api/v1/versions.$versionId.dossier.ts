import { apiRoute, notFound } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { visibleVersion } from '#app/.server/queries/api.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { getDossier, inspectionCopyLine } from '#app/.server/services/dossiers.ts'
import { inspectorAccess } from '#app/.server/services/grants.ts'

/** The version's dossier as PDF; an inspector gets their own "issued to … for inspection" copy, as in the app. */
export const loader = apiRoute({ scope: 'read', permission: 'spec:read', inspectorsByGrant: true }, async (input) => {
	const version = await visibleVersion(db, input)
	if (!version) notFound('The version')
	let inspectionLine: string | undefined
	if (input.byGrant) {
		const access = await inspectorAccess(db, input.actor.id, version.id, input.now)
		if (!access) notFound('The version')
		inspectionLine = inspectionCopyLine(input.actor, access, input.now)
	}
	const file = await getDossier(db, {
		actor: input.actor,
		versionId: version.id,
		format: 'pdf',
		now: input.now,
		ipAddress: clientAddress(input.request),
		purpose: 'download',
		inspectionLine,
	})
	if (!file) notFound('The version')
	return new Response(new Uint8Array(file.bytes), {
		headers: {
			'Content-Type': 'application/pdf',
			'Content-Disposition': `attachment; filename="${file.fileName}"`,
			'Cache-Control': 'private, no-store',
		},
	})
})
