import { and, eq } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { apiKeys } from '#app/.server/db/schema/api-keys.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import type { buildOpenApiDocument } from '#app/.server/openapi.ts'
import { createApiKey, revokeApiKey } from '#app/.server/services/api-keys.ts'
import { createGrant } from '#app/.server/services/grants.ts'
import { loader as materialsLoader } from '#app/routes/api/v1/materials.ts'
import { loader as openApiLoader } from '#app/routes/api/v1/openapi.ts'
import { action as compareAction } from '#app/routes/api/v1/specifications.$specificationId.compare.ts'
import { loader as specificationLoader } from '#app/routes/api/v1/specifications.$specificationId.ts'
import { loader as specificationsLoader } from '#app/routes/api/v1/specifications.ts'
import { action as spectraAction } from '#app/routes/api/v1/spectra.ts'
import { loader as dossierLoader } from '#app/routes/api/v1/versions.$versionId.dossier.ts'
import { loader as bandsLoader } from '#app/routes/api/v1/versions.$versionId.bands.ts'
import { loader as versionLoader } from '#app/routes/api/v1/versions.$versionId.ts'
import { apiGet, apiKeyFor, apiPostJson, apiUpload, callApiRoute } from '#tests/support/api-requests.ts'
import { pdfPageTexts } from '#tests/support/pdf-text.ts'
import { auditActionsFor, makeActor, makeMaterial, makeSignedVersion } from '#tests/support/factories.ts'

const SPECTRUM = 'compounds/4_chloroaniline_solid_pe1000.jdx'

/** An RFC 9457 problem: its media type and its four members. */
async function expectProblem(response: Response, status: number): Promise<{ detail: string }> {
	expect(response.status).toBe(status)
	expect(response.headers.get('Content-Type')).toBe('application/problem+json')
	const problem = (await response.json()) as { type: string; title: string; status: number; detail: string }
	expect(problem).toMatchObject({ type: 'about:blank', status })
	expect(problem.title).toEqual(expect.any(String))
	expect(problem.detail).toEqual(expect.any(String))
	return problem
}

test('[API-001] a valid read key reads materials, paginated; the key stores only a hash and notes its last use', async () => {
	const author = await makeActor(db, 'author')
	for (const name of ['Alpha', 'Beta', 'Gamma']) await makeMaterial(db, author, name)
	const token = await apiKeyFor(author, ['read'])
	const response = await callApiRoute(materialsLoader, apiGet('/materials?page=2&pageSize=2', token))
	expect(response.status).toBe(200)
	const page = (await response.json()) as { items: Array<unknown>; page: number; pageSize: number; total: number }
	expect(page).toMatchObject({ page: 2, pageSize: 2, total: 3 })
	expect(page.items).toHaveLength(1)
	const [stored] = await db.select().from(apiKeys).where(eq(apiKeys.userId, author.id))
	expect(stored!.hash).toMatch(/^[0-9a-f]{64}$/)
	expect(stored!.hash).not.toContain(token.slice(3))
	expect(token.startsWith(stored!.prefix)).toBe(true)
	expect(stored!.lastUsedAt).not.toBeNull()
	expect(await auditActionsFor(db, stored!.id)).toEqual(['api-key.created'])
})

test('[API-002] no key, an unknown key and a revoked key are 401 problem+json', async () => {
	const author = await makeActor(db, 'author')
	const token = await apiKeyFor(author, ['read'])
	await expectProblem(await callApiRoute(materialsLoader, apiGet('/materials', null)), 401)
	await expectProblem(await callApiRoute(materialsLoader, apiGet('/materials', `bp_${'0'.repeat(64)}`)), 401)
	const [key] = await db.select().from(apiKeys).where(eq(apiKeys.userId, author.id))
	const revoked = await revokeApiKey(db, { actor: author, keyId: key!.id, now: new Date() })
	expect(revoked.ok).toBe(true)
	const problem = await expectProblem(await callApiRoute(materialsLoader, apiGet('/materials', token)), 401)
	expect(problem.detail).toMatch(/revoked/)
	expect(await auditActionsFor(db, key!.id)).toEqual(['api-key.created', 'api-key.revoked'])
})

test('[API-003] a read-scope key POSTing is 403; a role without the permission is 403; bad input is 400/422', async () => {
	const author = await makeActor(db, 'author')
	const readToken = await apiKeyFor(author, ['read'])
	const problem = await expectProblem(await callApiRoute(spectraAction, apiUpload(readToken, SPECTRUM)), 403)
	expect(problem.detail).toMatch(/"write" scope/)
	const reviewer = await makeActor(db, 'reviewer')
	const reviewerToken = await apiKeyFor(reviewer, ['read', 'write'])
	await expectProblem(await callApiRoute(spectraAction, apiUpload(reviewerToken, SPECTRUM)), 403)
	await expectProblem(await callApiRoute(materialsLoader, apiGet('/materials?pageSize=1000', readToken)), 400)
	const writeToken = await apiKeyFor(author, ['write', 'read'])
	const specId = crypto.randomUUID()
	const invalid = await callApiRoute(compareAction, apiPostJson(`/specifications/${specId}/compare`, writeToken, {}), {
		specificationId: specId,
	})
	await expectProblem(invalid, 422)
	const missing = await callApiRoute(specificationLoader, apiGet('/specifications/not-a-uuid', readToken), {
		specificationId: 'not-a-uuid',
	})
	await expectProblem(missing, 404)
})

test('[API-004] an inspector gets read keys only, and reads only versions their grant covers', async () => {
	const inspector = await makeActor(db, 'inspector')
	const refused = await createApiKey(db, { actor: inspector, name: 'x', scopes: ['write'], now: new Date() })
	expect(refused.ok).toBe(false)
	const token = await apiKeyFor(inspector, ['read'])
	await expectProblem(await callApiRoute(specificationsLoader, apiGet('/specifications', token)), 403)
	const cast = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const signed = await makeSignedVersion(db, cast)
	const params = { versionId: signed.versionId }
	await expectProblem(await callApiRoute(versionLoader, apiGet(`/versions/${signed.versionId}`, token), params), 404)
	const admin = await makeActor(db, 'admin')
	const today = new Date().toISOString().slice(0, 10)
	const granted = await createGrant(db, {
		actor: admin,
		values: {
			inspectorId: inspector.id,
			purpose: 'Regulatory inspection',
			scope: 'chosen',
			specificationIds: [signed.specificationId],
			startsAt: today,
			endsAt: new Date(Date.now() + 7 * 86_400_000).toISOString().slice(0, 10),
		},
		now: new Date(),
	})
	expect(granted.ok).toBe(true)
	const response = await callApiRoute(bandsLoader, apiGet(`/versions/${signed.versionId}/bands`, token), params)
	expect(response.status).toBe(200)
	expect(((await response.json()) as { bands: Array<unknown> }).bands).toHaveLength(1)
	const version = await callApiRoute(versionLoader, apiGet(`/versions/${signed.versionId}`, token), params)
	expect(version.status).toBe(200)
	expect(await version.json()).not.toHaveProperty('grant')
	// The inspector's dossier copy names them and the grant it was issued under (PRODUCT.md §7).
	const copy = await callApiRoute(dossierLoader, apiGet(`/versions/${signed.versionId}/dossier.pdf`, token), params)
	expect(copy.status).toBe(200)
	const text = (await pdfPageTexts(new Uint8Array(await copy.arrayBuffer()))).join(' ')
	expect(text).toContain(`Issued to ${inspector.name}`)
	expect(text).toContain('for inspection (Regulatory inspection)')
	// PRODUCT.md §7: every view by an inspector is on record, through the API as through the pages.
	const views = await db
		.select({ after: auditEvents.after, actorId: auditEvents.actorId })
		.from(auditEvents)
		.where(and(eq(auditEvents.entityId, signed.versionId), eq(auditEvents.action, 'inspection.viewed')))
	expect(views).toEqual([
		{ actorId: inspector.id, after: { grant: 'Regulatory inspection', via: 'api' } },
		{ actorId: inspector.id, after: { grant: 'Regulatory inspection', via: 'api' } },
	])
})

test('[API-005] a script with a write key uploads a real spectrum and gets "conforms" against the effective version', async () => {
	const cast = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const token = await apiKeyFor(cast.author, ['read', 'write'])
	const uploaded = await callApiRoute(spectraAction, apiUpload(token, SPECTRUM))
	expect(uploaded.status).toBe(201)
	const { spectrumId } = (await uploaded.json()) as { spectrumId: string }
	// The specification's reference is the same file, stored once: the upload above is reused as its reference.
	const signed = await makeSignedVersion(db, cast)
	expect(signed.state).toBe('effective')
	const detail = await callApiRoute(specificationLoader, apiGet(`/specifications/${signed.specificationId}`, token), {
		specificationId: signed.specificationId,
	})
	expect(await detail.json()).toMatchObject({ effectiveVersionId: signed.versionId })
	const compared = await callApiRoute(
		compareAction,
		apiPostJson(`/specifications/${signed.specificationId}/compare`, token, { sampleSpectrumId: spectrumId }),
		{ specificationId: signed.specificationId },
	)
	expect(compared.status).toBe(200)
	const result = (await compared.json()) as { verdict: string; correlation: number; versionId: string }
	expect(result).toMatchObject({ verdict: 'conforms', versionId: signed.versionId })
	expect(result.correlation).toBeGreaterThan(0.999)
	const evidenceCount = await db.execute('select count(*)::int as n from evidence')
	expect(evidenceCount[0]).toMatchObject({ n: 0 })
	const dossier = await callApiRoute(dossierLoader, apiGet(`/versions/${signed.versionId}/dossier.pdf`, token), {
		versionId: signed.versionId,
	})
	expect(dossier.status).toBe(200)
	expect(dossier.headers.get('Content-Type')).toBe('application/pdf')
	expect(new TextDecoder().decode(new Uint8Array(await dossier.arrayBuffer()).slice(0, 5))).toBe('%PDF-')
})

/** Resolves a local JSON Pointer ('#/a/b') in the document, or undefined (RFC 6901 escapes ~0 and ~1). */
function resolvePointer(document: unknown, pointer: string): unknown {
	return pointer
		.slice(2)
		.split('/')
		.map((token) => token.replaceAll('~1', '/').replaceAll('~0', '~'))
		.reduce<unknown>(
			(node, token) => (node && typeof node === 'object' ? (node as Record<string, unknown>)[token] : undefined),
			document,
		)
}

function collectRefs(node: unknown, into: Array<string> = []): Array<string> {
	if (Array.isArray(node)) for (const item of node) collectRefs(item, into)
	else if (node && typeof node === 'object') {
		for (const [key, value] of Object.entries(node)) {
			if (key === '$ref' && typeof value === 'string') into.push(value)
			else collectRefs(value, into)
		}
	}
	return into
}

test('[API-006] the OpenAPI document is a valid 3.1 document and is served at /api/v1/openapi.json', async () => {
	const response = await openApiLoader()
	expect(response.status).toBe(200)
	const document = (await response.json()) as ReturnType<typeof buildOpenApiDocument>
	// OpenAPI Specification 3.1.0, spec.openapis.org: `openapi` is the version string, `info` needs `title` and
	// `version`, each Operation Object's `responses` holds at least one response, path templates name required
	// path parameters, an http security scheme names its scheme, and every reference must resolve.
	expect(document.openapi).toBe('3.1.0')
	expect(document.info).toMatchObject({ title: expect.any(String), version: expect.any(String) })
	expect(document.components.securitySchemes.bearerAuth).toEqual(
		expect.objectContaining({ type: 'http', scheme: 'bearer' }),
	)
	const methods = ['get', 'put', 'post', 'delete', 'options', 'head', 'patch', 'trace']
	const operationIds = new Set<string>()
	for (const [path, item] of Object.entries(document.paths)) {
		expect(path.startsWith('/')).toBe(true)
		for (const [method, operation] of Object.entries(item as Record<string, Record<string, unknown>>)) {
			expect(methods).toContain(method)
			const responses = operation.responses as Record<
				string,
				{ description: string; content?: Record<string, unknown> }
			>
			expect(Object.keys(responses).length).toBeGreaterThan(0)
			for (const [status, response] of Object.entries(responses)) {
				expect(status).toMatch(/^[1-5]\d\d$/)
				expect(response.description).toEqual(expect.any(String))
				if (Number(status) >= 400) expect(Object.keys(response.content ?? {})).toEqual(['application/problem+json'])
			}
			const id = operation.operationId as string
			expect(operationIds.has(id)).toBe(false)
			operationIds.add(id)
			const pathParams = ((operation.parameters ?? []) as Array<{ name: string; in: string; required?: boolean }>)
				.filter((param) => param.in === 'path')
				.map((param) => (expect(param.required).toBe(true), param.name))
			expect(pathParams.sort()).toEqual([...path.matchAll(/\{(\w+)\}/g)].map((match) => match[1]).sort())
		}
	}
	expect(operationIds.size).toBe(8)
	const refs = collectRefs(document)
	expect(refs.length).toBeGreaterThan(0)
	for (const ref of refs) {
		expect(ref.startsWith('#/'), ref).toBe(true)
		expect(resolvePointer(document, ref), ref).toBeDefined()
	}
	const problem = document.components.schemas.Problem as { required: Array<string> }
	expect(problem.required).toEqual(expect.arrayContaining(['type', 'title', 'status', 'detail']))
})
