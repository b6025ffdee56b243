import { aliasedTable, and, asc, count, desc, eq, exists, ilike, or, sql, type SQL } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { evidence, specifications, specVersions, VERSION_STATES } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { parseContent } from '#app/.server/services/specifications.ts'
import { containsPattern, SearchTextSchema } from '#shared/search/text-search.ts'

export const SpecificationListQuerySchema = z.object({
	q: SearchTextSchema,
	state: z.enum(VERSION_STATES).optional().catch(undefined),
	materialId: z.string().uuid().optional().catch(undefined),
	ownerId: z.string().max(64).optional().catch(undefined),
	page: z.coerce.number().int().min(1).max(100_000).catch(1),
})
export type SpecificationListQuery = z.infer<typeof SpecificationListQuerySchema>
export const SPECIFICATION_PAGE_SIZE = 25

/**
 * Specifications with their latest version, filtered by that version's state, the material and the owner; `q`
 * matches the document number, title, material code, name or CAS RN. One page of SPECIFICATION_PAGE_SIZE in
 * document-number order.
 *
 * Built to stay cheap with tens of thousands of specifications: the page walks the document-number index and fetches
 * each row's latest version through a LATERAL join on the (specification, version number) unique index, so only the
 * rows shown (and, with a state filter, the ones skipped) are looked at, never every version in the library. The
 * total counts specifications without looking at versions unless the state is filtered, which is exact because a
 * specification is created together with its first version and versions are never deleted.
 */
export async function listSpecifications(db: Db, query: SpecificationListQuery) {
	const latest = db
		.select({
			id: specVersions.id,
			versionNumber: specVersions.versionNumber,
			state: specVersions.state,
			updatedAt: specVersions.updatedAt,
		})
		.from(specVersions)
		.where(eq(specVersions.specificationId, specifications.id))
		.orderBy(desc(specVersions.versionNumber))
		.limit(1)
		.as('latest')
	const filters: Array<SQL> = []
	if (query.q) {
		const pattern = containsPattern(query.q)
		const match = or(
			ilike(specifications.documentNumber, pattern),
			ilike(specifications.title, pattern),
			ilike(materials.name, pattern),
			ilike(materials.code, pattern),
			ilike(materials.casNumber, pattern),
		)
		if (match) filters.push(match)
	}
	if (query.materialId) filters.push(eq(specifications.materialId, query.materialId))
	if (query.ownerId) filters.push(eq(specifications.ownerId, query.ownerId))
	const where = (state: boolean) => and(...filters, ...(state && query.state ? [eq(latest.state, query.state)] : []))
	const [rows, totals, owners] = await Promise.all([
		db
			.select({
				id: specifications.id,
				documentNumber: specifications.documentNumber,
				title: specifications.title,
				materialCode: materials.code,
				materialName: materials.name,
				ownerName: users.name,
				versionId: latest.id,
				versionNumber: latest.versionNumber,
				state: latest.state,
				updatedAt: latest.updatedAt,
			})
			.from(specifications)
			.innerJoin(materials, eq(materials.id, specifications.materialId))
			.innerJoin(users, eq(users.id, specifications.ownerId))
			.innerJoinLateral(latest, sql`true`)
			.where(where(true))
			.orderBy(asc(specifications.documentNumber))
			.limit(SPECIFICATION_PAGE_SIZE)
			.offset((query.page - 1) * SPECIFICATION_PAGE_SIZE),
		query.state
			? db
					.select({ total: count() })
					.from(specifications)
					.innerJoin(materials, eq(materials.id, specifications.materialId))
					.innerJoinLateral(latest, sql`true`)
					.where(where(true))
			: db
					.select({ total: count() })
					.from(specifications)
					.innerJoin(materials, eq(materials.id, specifications.materialId))
					.where(where(false)),
		db
			.select({ id: users.id, name: users.name })
			.from(users)
			.where(
				exists(
					db
						.select({ one: sql`1` })
						.from(specifications)
						.where(eq(specifications.ownerId, users.id)),
				),
			)
			.orderBy(asc(users.name)),
	])
	const total = totals[0]?.total ?? 0
	return {
		rows: rows.map((row) => ({ ...row, updatedAt: row.updatedAt.toISOString() })),
		total,
		pageCount: Math.max(1, Math.ceil(total / SPECIFICATION_PAGE_SIZE)),
		owners,
	}
}

/** The latest version of a specification (for links to "the specification"), or null. */
export async function getLatestVersionId(db: Db, specificationId: string): Promise<string | null> {
	if (!z.uuid().safeParse(specificationId).success) return null
	const [row] = await db
		.select({ id: specVersions.id })
		.from(specVersions)
		.where(eq(specVersions.specificationId, specificationId))
		.orderBy(desc(specVersions.versionNumber))
		.limit(1)
	return row?.id ?? null
}

/** Everything the version workspace shows, or null when the version is not of that specification. */
export async function getVersionWorkspace(db: Db, specificationId: string, versionId: string) {
	if (!z.uuid().safeParse(specificationId).success || !z.uuid().safeParse(versionId).success) return null
	const author = aliasedTable(users, 'author')
	const [row] = await db
		.select({ version: specVersions, specification: specifications, material: materials, authorName: author.name })
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.innerJoin(author, eq(author.id, specVersions.authorId))
		.where(and(eq(specVersions.id, versionId), eq(specVersions.specificationId, specificationId)))
	if (!row) return null
	const content = parseContent(row.version.content)
	const [versions, evidenceRows, reference] = await Promise.all([
		db
			.select({
				id: specVersions.id,
				versionNumber: specVersions.versionNumber,
				state: specVersions.state,
				changeReason: specVersions.changeReason,
				effectiveAt: specVersions.effectiveAt,
				updatedAt: specVersions.updatedAt,
			})
			.from(specVersions)
			.where(eq(specVersions.specificationId, specificationId))
			.orderBy(desc(specVersions.versionNumber)),
		db
			.select({
				id: evidence.id,
				kind: evidence.kind,
				title: evidence.title,
				verdict: evidence.verdict,
				correlation: evidence.correlation,
				result: evidence.result,
				sampleSpectrumId: evidence.sampleSpectrumId,
				createdAt: evidence.createdAt,
				createdByName: users.name,
			})
			.from(evidence)
			.innerJoin(users, eq(users.id, evidence.createdBy))
			.where(eq(evidence.versionId, versionId))
			.orderBy(desc(evidence.createdAt)),
		content.referenceSpectrumId
			? db
					.select({
						id: spectra.id,
						fileName: spectra.fileName,
						sha256: spectra.sha256,
						minWavenumber: spectra.minWavenumber,
						maxWavenumber: spectra.maxWavenumber,
					})
					.from(spectra)
					.where(eq(spectra.id, content.referenceSpectrumId))
					.then((found) => found[0] ?? null)
			: Promise.resolve(null),
	])
	return {
		specification: {
			id: row.specification.id,
			documentNumber: row.specification.documentNumber,
			title: row.specification.title,
			material: {
				id: row.material.id,
				code: row.material.code,
				name: row.material.name,
				casNumber: row.material.casNumber,
			},
		},
		version: {
			id: row.version.id,
			versionNumber: row.version.versionNumber,
			state: row.version.state,
			revision: row.version.revision,
			changeReason: row.version.changeReason,
			authorId: row.version.authorId,
			authorName: row.authorName,
			editorIds: row.version.editorIds,
			updatedAt: row.version.updatedAt.toISOString(),
			effectiveFrom: row.version.effectiveFrom?.toISOString() ?? null,
			lockedAt: row.version.lockedAt?.toISOString() ?? null,
			contentSha256: row.version.contentSha256,
			lastRejectionReason: row.version.lastRejectionReason,
		},
		content,
		reference,
		versions: versions.map((version) => ({
			...version,
			effectiveAt: version.effectiveAt?.toISOString() ?? null,
			updatedAt: version.updatedAt.toISOString(),
		})),
		evidence: evidenceRows.map((item) => ({ ...item, createdAt: item.createdAt.toISOString() })),
	}
}

/** Spectra an author may pick: references for the version's reference, any spectrum to compare. */
export async function listSpectrumChoices(db: Db) {
	const rows = await db
		.select({ id: spectra.id, fileName: spectra.fileName, purpose: spectra.purpose, materialCode: materials.code })
		.from(spectra)
		.leftJoin(materials, eq(materials.id, spectra.materialId))
		.orderBy(desc(spectra.uploadedAt))
		.limit(500)
	return rows
}
