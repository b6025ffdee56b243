import { and, asc, count, desc, eq, ilike, or, type SQL } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { SPECTRUM_PURPOSES, spectra } from '#app/.server/db/schema/spectra.ts'
import { containsPattern, SearchTextSchema } from '#shared/search/text-search.ts'
import type { ImportWarning } from '#shared/spectra/types.ts'

export const SpectrumListQuerySchema = z.object({
	q: SearchTextSchema,
	purpose: z.enum(SPECTRUM_PURPOSES).optional().catch(undefined),
	materialId: z.string().uuid().optional().catch(undefined),
	page: z.coerce.number().int().min(1).max(100_000).catch(1),
})
export type SpectrumListQuery = z.infer<typeof SpectrumListQuerySchema>
export const SPECTRUM_PAGE_SIZE = 25

/** One page of the library, newest first; `q` matches file, title, lot, material code, name or CAS RN. */
export async function listSpectra(db: Db, query: SpectrumListQuery) {
	const filters: Array<SQL> = []
	if (query.q) {
		const pattern = containsPattern(query.q)
		const match = or(
			ilike(spectra.fileName, pattern),
			ilike(spectra.title, pattern),
			ilike(spectra.referenceStandardLot, pattern),
			ilike(materials.name, pattern),
			ilike(materials.code, pattern),
			ilike(materials.casNumber, pattern),
		)
		if (match) filters.push(match)
	}
	if (query.purpose) filters.push(eq(spectra.purpose, query.purpose))
	if (query.materialId) filters.push(eq(spectra.materialId, query.materialId))
	const where = filters.length ? and(...filters) : undefined
	const [rows, totals] = await Promise.all([
		db
			.select({
				id: spectra.id,
				fileName: spectra.fileName,
				title: spectra.title,
				purpose: spectra.purpose,
				points: spectra.points,
				minWavenumber: spectra.minWavenumber,
				maxWavenumber: spectra.maxWavenumber,
				materialCode: materials.code,
				materialName: materials.name,
				uploadedAt: spectra.uploadedAt,
				lockedAt: spectra.lockedAt,
			})
			.from(spectra)
			.leftJoin(materials, eq(materials.id, spectra.materialId))
			.where(where)
			.orderBy(desc(spectra.uploadedAt), asc(spectra.id))
			.limit(SPECTRUM_PAGE_SIZE)
			.offset((query.page - 1) * SPECTRUM_PAGE_SIZE),
		db.select({ total: count() }).from(spectra).leftJoin(materials, eq(materials.id, spectra.materialId)).where(where),
	])
	const total = totals[0]?.total ?? 0
	return {
		rows: rows.map((row) => ({ ...row, uploadedAt: row.uploadedAt.toISOString(), locked: row.lockedAt !== null })),
		total,
		pageCount: Math.max(1, Math.ceil(total / SPECTRUM_PAGE_SIZE)),
	}
}

/** A spectrum's record without its arrays, for its page; or null. */
export async function getSpectrumRecord(db: Db, id: string) {
	if (!z.uuid().safeParse(id).success) return null
	const [row] = await db
		.select({
			id: spectra.id,
			sha256: spectra.sha256,
			fileName: spectra.fileName,
			byteSize: spectra.byteSize,
			format: spectra.format,
			title: spectra.title,
			points: spectra.points,
			minWavenumber: spectra.minWavenumber,
			maxWavenumber: spectra.maxWavenumber,
			xUnits: spectra.xUnits,
			yUnits: spectra.yUnits,
			ordinate: spectra.ordinate,
			warnings: spectra.warnings,
			parserVersion: spectra.parserVersion,
			purpose: spectra.purpose,
			technique: spectra.technique,
			instrument: spectra.instrument,
			resolution: spectra.resolution,
			acquiredOn: spectra.acquiredOn,
			referenceStandardName: spectra.referenceStandardName,
			referenceStandardLot: spectra.referenceStandardLot,
			notes: spectra.notes,
			uploadedAt: spectra.uploadedAt,
			lockedAt: spectra.lockedAt,
			uploaderName: users.name,
			materialId: spectra.materialId,
			materialCode: materials.code,
			materialName: materials.name,
		})
		.from(spectra)
		.innerJoin(users, eq(users.id, spectra.uploadedBy))
		.leftJoin(materials, eq(materials.id, spectra.materialId))
		.where(eq(spectra.id, id))
	if (!row) return null
	return {
		...row,
		warnings: row.warnings as Array<ImportWarning>,
		uploadedAt: row.uploadedAt.toISOString(),
		lockedAt: row.lockedAt?.toISOString() ?? null,
	}
}

/** Materials for pickers: code and name, sorted by code. */
export async function listMaterialChoices(db: Db) {
	return db
		.select({ id: materials.id, code: materials.code, name: materials.name })
		.from(materials)
		.orderBy(asc(materials.code))
}
