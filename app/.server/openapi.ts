import { z } from 'zod'
import { MAX_JSON_BODY_BYTES } from '#app/.server/api.ts'
import { API_PATH_PREFIX, PROBLEM_CONTENT_TYPE } from '#app/.server/problem.ts'
import {
	CompareRequestSchema,
	CompareResultSchema,
	MaterialPageSchema,
	PageQuerySchema,
	ProblemSchema,
	SpecificationDetailSchema,
	SpecificationPageSchema,
	SpectrumUploadFormSchema,
	SpectrumUploadSchema,
	VersionBandsSchema,
	VersionDetailSchema,
} from '#shared/api/v1.ts'

type JsonSchema = Record<string, unknown>

/** Named schemas of `components.schemas`; operations refer to them by name. */
const COMPONENTS = {
	Problem: ProblemSchema,
	MaterialPage: MaterialPageSchema,
	SpecificationPage: SpecificationPageSchema,
	SpecificationDetail: SpecificationDetailSchema,
	VersionDetail: VersionDetailSchema,
	VersionBands: VersionBandsSchema,
	SpectrumUpload: SpectrumUploadSchema,
	CompareRequest: CompareRequestSchema,
	CompareResult: CompareResultSchema,
} as const
type ComponentName = keyof typeof COMPONENTS

type Operation = {
	method: 'get' | 'post'
	path: string
	operationId: string
	summary: string
	scope: 'read' | 'write'
	pathParams?: Array<{ name: string; description: string }>
	query?: z.ZodObject
	jsonBody?: ComponentName
	multipart?: z.ZodObject
	/** 2xx status → a component name, or a binary media type. */
	success: { status: number; schema: ComponentName } | { status: number; mediaType: string }
	errors: Array<number>
}

const OPERATIONS: Array<Operation> = [
	{
		method: 'get',
		path: '/materials',
		operationId: 'listMaterials',
		summary: 'List materials',
		scope: 'read',
		query: PageQuerySchema,
		success: { status: 200, schema: 'MaterialPage' },
		errors: [400, 401, 403],
	},
	{
		method: 'get',
		path: '/specifications',
		operationId: 'listSpecifications',
		summary: 'List specifications',
		scope: 'read',
		query: PageQuerySchema,
		success: { status: 200, schema: 'SpecificationPage' },
		errors: [400, 401, 403],
	},
	{
		method: 'get',
		path: '/specifications/{specificationId}',
		operationId: 'getSpecification',
		summary: 'Get a specification with its versions',
		scope: 'read',
		pathParams: [{ name: 'specificationId', description: 'Specification id (UUID)' }],
		success: { status: 200, schema: 'SpecificationDetail' },
		errors: [401, 403, 404],
	},
	{
		method: 'post',
		path: '/specifications/{specificationId}/compare',
		operationId: 'compareWithEffectiveVersion',
		summary: "Compare a stored spectrum with the specification's effective version (nothing is stored)",
		scope: 'write',
		pathParams: [{ name: 'specificationId', description: 'Specification id (UUID)' }],
		jsonBody: 'CompareRequest',
		success: { status: 200, schema: 'CompareResult' },
		errors: [400, 401, 403, 404, 409, 413, 415, 422],
	},
	{
		method: 'get',
		path: '/versions/{versionId}',
		operationId: 'getVersion',
		summary: 'Get a specification version with its content',
		scope: 'read',
		pathParams: [{ name: 'versionId', description: 'Version id (UUID)' }],
		success: { status: 200, schema: 'VersionDetail' },
		errors: [401, 403, 404],
	},
	{
		method: 'get',
		path: '/versions/{versionId}/bands',
		operationId: 'getVersionBands',
		summary: "Get a version's band table",
		scope: 'read',
		pathParams: [{ name: 'versionId', description: 'Version id (UUID)' }],
		success: { status: 200, schema: 'VersionBands' },
		errors: [401, 403, 404],
	},
	{
		method: 'get',
		path: '/versions/{versionId}/dossier.pdf',
		operationId: 'getVersionDossier',
		summary: "Download a version's dossier as PDF",
		scope: 'read',
		pathParams: [{ name: 'versionId', description: 'Version id (UUID)' }],
		success: { status: 200, mediaType: 'application/pdf' },
		errors: [401, 403, 404],
	},
	{
		method: 'post',
		path: '/spectra',
		operationId: 'uploadSpectrum',
		summary: 'Upload one spectrum file (multipart/form-data)',
		scope: 'write',
		multipart: SpectrumUploadFormSchema,
		success: { status: 201, schema: 'SpectrumUpload' },
		errors: [400, 401, 403, 413, 422],
	},
]

const ERROR_DESCRIPTIONS: Record<number, string> = {
	400: 'The query string or form is not valid',
	401: 'No API key, an unknown key, a revoked key, or a deactivated account',
	403: "The key's scope or the owner's roles do not allow this",
	404: 'No such record, or not one you may see',
	409: 'The specification has no effective version',
	413: 'The request body is too large',
	415: 'The request body is not JSON',
	422: 'The request body is not valid, or the file could not be read',
	429: 'Too many requests for this key (or, without a valid key, from this address); see Retry-After and RateLimit',
}

/** Answered by every operation: the per-key and per-address rate limits of app/.server/security/api-limits.ts. */
const EVERY_OPERATION_ERRORS = [429]

function toSchema(schema: z.ZodType, io: 'input' | 'output'): JsonSchema {
	const { $schema: _ignored, ...rest } = z.toJSONSchema(schema, { target: 'draft-2020-12', io, unrepresentable: 'any' })
	return rest
}

const ref = (name: ComponentName) => ({ $ref: `#/components/schemas/${name}` })

function operationObject(operation: Operation) {
	const parameters = [
		...(operation.pathParams ?? []).map((param) => ({
			name: param.name,
			in: 'path',
			required: true,
			description: param.description,
			schema: { type: 'string', format: 'uuid' },
		})),
		...Object.entries(operation.query?.shape ?? {}).map(([name, schema]) => {
			const json = toSchema(schema as z.ZodType, 'input')
			const { description, ...rest } = json
			return { name, in: 'query', required: false, description, schema: rest }
		}),
	]
	const requestBody = operation.jsonBody
		? { required: true, content: { 'application/json': { schema: ref(operation.jsonBody) } } }
		: operation.multipart
			? {
					required: true,
					content: {
						'multipart/form-data': {
							schema: {
								...toSchema(operation.multipart, 'input'),
								properties: multipartProperties(operation.multipart),
							},
						},
					},
				}
			: undefined
	const success = operation.success
	const responses: Record<string, unknown> = {
		[success.status]: {
			description: 'Success',
			content:
				'schema' in success
					? { 'application/json': { schema: ref(success.schema) } }
					: { [success.mediaType]: { schema: { type: 'string', contentMediaType: success.mediaType } } },
		},
	}
	for (const status of [...operation.errors, ...EVERY_OPERATION_ERRORS]) {
		responses[status] = {
			description: ERROR_DESCRIPTIONS[status] ?? 'Error',
			content: { [PROBLEM_CONTENT_TYPE]: { schema: ref('Problem') } },
		}
	}
	return {
		operationId: operation.operationId,
		summary: operation.summary,
		description: `Needs an API key with the "${operation.scope}" scope.`,
		'x-scope': operation.scope,
		...(parameters.length ? { parameters } : {}),
		...(requestBody ? { requestBody } : {}),
		responses,
		security: [{ bearerAuth: [] }],
	}
}

/** The file field is binary in a multipart body (OpenAPI 3.1 §4.8.14.4: contentMediaType for raw octets). */
function multipartProperties(schema: z.ZodObject): Record<string, unknown> {
	const properties = toSchema(schema, 'input').properties as Record<string, JsonSchema>
	return { ...properties, file: { ...properties.file, type: 'string', contentMediaType: 'application/octet-stream' } }
}

/**
 * The methods a path under /api/v1 answers (GET brings HEAD, RFC 9110 §9.3.2), from the operations above, or null
 * when no operation has that path: for the Allow field of a 405 (RFC 9110 §15.5.6).
 */
export function allowedApiMethods(pathname: string): Array<string> | null {
	const path = pathname.slice(API_PATH_PREFIX.length).replace(/\/+$/, '')
	const methods = new Set<string>()
	if (path === '/openapi.json') methods.add('GET')
	for (const operation of OPERATIONS) {
		const pattern = new RegExp(`^${operation.path.replace(/\{\w+\}/g, '[^/]+').replaceAll('.', '\\.')}$`)
		if (pattern.test(path)) methods.add(operation.method.toUpperCase())
	}
	if (methods.size === 0) return null
	if (methods.has('GET')) methods.add('HEAD')
	return ['GET', 'HEAD', 'POST'].filter((method) => methods.has(method))
}

/**
 * The OpenAPI 3.1 document of /api/v1, built from the same zod schemas the routes parse with. It depends on nothing
 * but this module, so it is built once, on first use, and shared (read-only) by every request after.
 */
export function buildOpenApiDocument() {
	cachedDocument ??= createOpenApiDocument()
	return cachedDocument
}

let cachedDocument: ReturnType<typeof createOpenApiDocument> | undefined

function createOpenApiDocument() {
	const paths: Record<string, Record<string, unknown>> = {}
	for (const operation of OPERATIONS) {
		paths[operation.path] = { ...paths[operation.path], [operation.method]: operationObject(operation) }
	}
	const schemas = Object.fromEntries(
		Object.entries(COMPONENTS).map(([name, schema]) => [
			name,
			toSchema(schema, name === 'CompareRequest' ? 'input' : 'output'),
		]),
	)
	return {
		openapi: '3.1.0',
		jsonSchemaDialect: 'https://spec.openapis.org/oas/3.1/dialect/base',
		info: {
			title: 'Bandproof API',
			version: '1.0.0',
			description: `Read materials, specifications and versions; upload spectra; compare a spectrum with a specification's effective version. Errors are application/problem+json (RFC 9457). JSON bodies are limited to ${MAX_JSON_BODY_BYTES} bytes.`,
		},
		servers: [{ url: API_PATH_PREFIX }],
		security: [{ bearerAuth: [] }],
		paths,
		components: {
			schemas,
			securitySchemes: {
				bearerAuth: {
					type: 'http',
					scheme: 'bearer',
					description: 'A personal API key from Settings → API keys, sent as "Authorization: Bearer bp_…".',
				},
			},
		},
	}
}

export type OpenApiDocument = ReturnType<typeof buildOpenApiDocument>

type DocumentOperation = {
	operationId: string
	summary: string
	'x-scope': string
	parameters?: Array<{ name: string; in: string; description?: string }>
	requestBody?: { content: Record<string, unknown> }
	responses: Record<string, { description: string }>
}

/** The operations of a document, flattened for the in-app reference page. */
export function listOperations(document: OpenApiDocument) {
	const base = document.servers[0]?.url ?? ''
	return Object.entries(document.paths).flatMap(([path, methods]) =>
		Object.entries(methods as Record<string, DocumentOperation>).map(([method, operation]) => ({
			method: method.toUpperCase(),
			path: `${base}${path}`,
			operationId: operation.operationId,
			summary: operation.summary,
			scope: operation['x-scope'],
			parameters: (operation.parameters ?? []).map((param) => ({
				name: param.name,
				in: param.in,
				description: param.description ?? '',
			})),
			body: operation.requestBody ? Object.keys(operation.requestBody.content).join(', ') : null,
			responses: Object.entries(operation.responses).map(([status, response]) => ({
				status,
				description: response.description,
			})),
		})),
	)
}
