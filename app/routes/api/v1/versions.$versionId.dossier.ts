import { apiRoute, notFound } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { visibleVersion } from '#app/.server/queries/api.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { getDossier, inspectionCopyLine } from '#app/.server/services/dossiers.ts'

/** The version's dossier as PDF; an inspector gets their own "issued to … for inspection" copy, as in the app. */
export const loader = apiRoute({ scope: 'read', permission: 'spec:read', inspectorsByGrant: true }, async (input) => {
	const version = await visibleVersion(db, input)
	if (!version) notFound('The version')
	// visibleVersion found the inspector's grant (or refused): their copy says to whom and for what it was issued.
	const inspectionLine = version.grant ? inspectionCopyLine(input.actor, version.grant, input.now) : undefined
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
