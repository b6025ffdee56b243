import { apiRoute, notFound, uuidParam } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { getSpecificationWithVersions } from '#app/.server/queries/api.ts'

export const loader = apiRoute({ scope: 'read', permission: 'spec:read' }, async ({ params }) => {
	const id = uuidParam(params, 'specificationId', 'The specification')
	const specification = await getSpecificationWithVersions(db, id)
	return specification ? Response.json(specification) : notFound('The specification')
})
