import { buildOpenApiDocument } from '#app/.server/openapi.ts'

/** The OpenAPI 3.1 document of /api/v1; public, like any API reference. */
export function loader() {
	return Response.json(buildOpenApiDocument(), { headers: { 'Cache-Control': 'public, max-age=300' } })
}
