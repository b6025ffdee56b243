import { apiRoute } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { pageMaterials } from '#app/.server/queries/api.ts'
import { PageQuerySchema } from '#shared/api/v1.ts'

export const loader = apiRoute(
	{ scope: 'read', permission: 'material:read', query: PageQuerySchema },
	async ({ query }) => Response.json(await pageMaterials(db, query)),
)
