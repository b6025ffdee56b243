import { apiRoute, notFound } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { visibleVersion } from '#app/.server/queries/api.ts'

export const loader = apiRoute({ scope: 'read', permission: 'spec:read', inspectorsByGrant: true }, async (input) => {
	const version = await visibleVersion(db, input)
	return version ? Response.json({ versionId: version.id, bands: version.content.bands }) : notFound('The version')
})
