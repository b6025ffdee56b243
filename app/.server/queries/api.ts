import { and, asc, count, desc, eq } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { inspectorAccess } from '#app/.server/services/grants.ts'
import { parseContent } from '#app/.server/services/specifications.ts'
import type { PageQuery } from '#shared/api/v1.ts'
import type { Actor } from '#shared/authz/permissions.ts'

const offsetOf = (query: PageQuery) => (query.page - 1) * query.pageSize
const iso = (value: Date | null) => value?.toISOString() ?? null

export async function pageMaterials(db: Db, query: PageQuery) {
	const [items, [total]] = await Promise.all([
		db
			.select({
				id: materials.id,
				code: materials.code,
				name: materials.name,
				casNumber: materials.casNumber,
				formula: materials.formula,
				grade: materials.grade,
			})
			.from(materials)
			.orderBy(asc(materials.code))
			.limit(query.pageSize)
			.offset(offsetOf(query)),
		db.select({ value: count() }).from(materials),
	])
	return { items, page: query.page, pageSize: query.pageSize, total: total?.value ?? 0 }
}

const specificationColumns = {
	id: specifications.id,
	documentNumber: specifications.documentNumber,
	title: specifications.title,
	materialId: specifications.materialId,
	materialName: materials.name,
}

export async function pageSpecifications(db: Db, query: PageQuery) {
	const [items, [total]] = await Promise.all([
		db
			.select(specificationColumns)
			.from(specifications)
			.innerJoin(materials, eq(materials.id, specifications.materialId))
			.orderBy(asc(specifications.documentNumber))
			.limit(query.pageSize)
			.offset(offsetOf(query)),
		db.select({ value: count() }).from(specifications),
	])
	return { items, page: query.page, pageSize: query.pageSize, total: total?.value ?? 0 }
}

export async function getSpecificationWithVersions(db: Db, specificationId: string) {
	const [specification] = await db
		.select(specificationColumns)
		.from(specifications)
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.where(eq(specifications.id, specificationId))
	if (!specification) return null
	const versions = await db
		.select({
			id: specVersions.id,
			versionNumber: specVersions.versionNumber,
			state: specVersions.state,
			effectiveAt: specVersions.effectiveAt,
		})
		.from(specVersions)
		.where(eq(specVersions.specificationId, specificationId))
		.orderBy(desc(specVersions.versionNumber))
	return {
		...specification,
		effectiveVersionId: versions.find((version) => version.state === 'effective')?.id ?? null,
		versions: versions.map((version) => ({ ...version, effectiveAt: iso(version.effectiveAt) })),
	}
}

export async function getVersionWithContent(db: Db, versionId: string) {
	const [row] = await db
		.select({
			id: specVersions.id,
			versionNumber: specVersions.versionNumber,
			state: specVersions.state,
			effectiveAt: specVersions.effectiveAt,
			specificationId: specVersions.specificationId,
			documentNumber: specifications.documentNumber,
			content: specVersions.content,
		})
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.where(eq(specVersions.id, versionId))
	if (!row) return null
	return { ...row, effectiveAt: iso(row.effectiveAt), content: parseContent(row.content) }
}

/** The specification's effective version (at most one is effective at a time), with its content. */
export async function getEffectiveVersion(db: Db, specificationId: string) {
	const [effective] = await db
		.select({ id: specVersions.id })
		.from(specVersions)
		.where(and(eq(specVersions.specificationId, specificationId), eq(specVersions.state, 'effective')))
	return effective ? getVersionWithContent(db, effective.id) : null
}

/**
 * A version the actor may read: any, for lab staff; for an inspector (here by grant), only a released version of a
 * specification their current grant covers. Anything else reads as absent, so that a grant does not reveal ids.
 */
export async function visibleVersion(
	db: Db,
	input: { actor: Actor; byGrant: boolean; params: Record<string, string | undefined>; now: Date },
) {
	const versionId = input.params.versionId
	if (!z.uuid().safeParse(versionId).success || !versionId) return null
	const access = input.byGrant ? await inspectorAccess(db, input.actor.id, versionId, input.now) : null
	if (input.byGrant && !access) return null
	const version = await getVersionWithContent(db, versionId)
	return version ? { ...version, grant: access } : null
}
