import { and, asc, count, desc, eq, ilike, or, sql, type SQL } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { materials } from '#app/.server/db/schema/materials.ts'

export const MATERIAL_SORTS = ['code', 'name', 'cas', 'grade', 'updated'] as const

/** The list page's query string, validated; anything unknown falls back to a default. */
export const MaterialListQuerySchema = z.object({
	q: z.string().trim().max(100).optional().catch(undefined),
	grade: z.string().trim().max(100).optional().catch(undefined),
	sort: z.enum(MATERIAL_SORTS).catch('code'),
	dir: z.enum(['asc', 'desc']).catch('asc'),
	page: z.coerce.number().int().min(1).max(100_000).catch(1),
})
export type MaterialListQuery = z.infer<typeof MaterialListQuerySchema>

export const MATERIAL_PAGE_SIZE = 20

const sortColumns = {
	code: materials.code,
	name: materials.name,
	cas: materials.casNumber,
	grade: materials.grade,
	updated: materials.updatedAt,
} as const

/** One page of materials matching the filters, with the total for the pager. */
export async function listMaterials(db: Db, query: MaterialListQuery) {
	const filters: Array<SQL> = []
	if (query.q) {
		const pattern = `%${query.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`
		const textMatch = or(
			ilike(materials.code, pattern),
			ilike(materials.name, pattern),
			ilike(materials.casNumber, pattern),
			sql`array_to_string(${materials.synonyms}, ' ') ilike ${pattern}`,
		)
		if (textMatch) filters.push(textMatch)
	}
	if (query.grade) filters.push(eq(materials.grade, query.grade))
	const where = filters.length ? and(...filters) : undefined
	const order = query.dir === 'asc' ? asc(sortColumns[query.sort]) : desc(sortColumns[query.sort])
	const [rows, totals, grades] = await Promise.all([
		db
			.select({
				id: materials.id,
				code: materials.code,
				name: materials.name,
				casNumber: materials.casNumber,
				formula: materials.formula,
				grade: materials.grade,
				updatedAt: materials.updatedAt,
			})
			.from(materials)
			.where(where)
			.orderBy(order, asc(materials.id))
			.limit(MATERIAL_PAGE_SIZE)
			.offset((query.page - 1) * MATERIAL_PAGE_SIZE),
		db.select({ total: count() }).from(materials).where(where),
		db.selectDistinct({ grade: materials.grade }).from(materials).orderBy(asc(materials.grade)),
	])
	const total = totals[0]?.total ?? 0
	return {
		rows,
		total,
		pageCount: Math.max(1, Math.ceil(total / MATERIAL_PAGE_SIZE)),
		grades: grades.map((row) => row.grade).filter((grade): grade is string => Boolean(grade)),
	}
}

/** One material for its edit page, or null. */
export async function getMaterial(db: Db, id: string) {
	if (!z.uuid().safeParse(id).success) return null
	const [row] = await db.select().from(materials).where(eq(materials.id, id))
	return row ?? null
}
