import { apiRoute } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { pageSpecifications } from '#app/.server/queries/api.ts'
import { PageQuerySchema } from '#shared/api/v1.ts'

export const loader = apiRoute({ scope: 'read', permission: 'spec:read', query: PageQuerySchema }, async ({ query }) =>
	Response.json(await pageSpecifications(db, query)),
)
