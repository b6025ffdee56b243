import { apiRoute, notFound, viewOf } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { visibleVersion } from '#app/.server/queries/api.ts'
import { recordInspectionView } from '#app/.server/services/grants.ts'

export const loader = apiRoute({ scope: 'read', permission: 'spec:read', inspectorsByGrant: true }, async (input) => {
	const version = await visibleVersion(db, input)
	if (!version) return notFound('The version')
	const { grant, ...shown } = version
	if (grant) await recordInspectionView(db, viewOf(input, version.id, grant.purpose))
	return Response.json(shown)
})
