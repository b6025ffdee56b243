import { eq, sql } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { listMaterials, MaterialListQuerySchema } from '#app/.server/queries/materials.ts'
import { createMaterial, updateMaterial } from '#app/.server/services/materials.ts'
import { auditActionsFor, makeActor } from '#tests/support/factories.ts'

const aspirin = {
	code: 'RM-0001',
	name: 'Acetylsalicylic acid',
	synonyms: 'Aspirin',
	casNumber: '50-78-2',
	formula: 'C9H8O4',
	grade: 'Ph. Eur.',
}

test('[MAT-010] a material is created with its audit event in the same transaction', async () => {
	const author = await makeActor(db, 'author')
	const outcome = await createMaterial(db, { actor: author, values: aspirin, now: new Date() })
	expect(outcome.ok).toBe(true)
	const id = outcome.ok ? outcome.value.id : ''
	const [row] = await db.select().from(materials).where(eq(materials.id, id))
	expect(row).toMatchObject({ code: 'RM-0001', synonyms: ['Aspirin'], casNumber: '50-78-2', revision: 1 })
	expect(await auditActionsFor(db, id)).toEqual(['material.created'])
})

test('[MAT-011] a duplicate code is refused on the code field and nothing is written', async () => {
	const author = await makeActor(db, 'author')
	await createMaterial(db, { actor: author, values: aspirin, now: new Date() })
	const second = await createMaterial(db, { actor: author, values: { ...aspirin, name: 'Other' }, now: new Date() })
	expect(second).toMatchObject({ ok: false, error: { field: 'code', status: 409 } })
	expect(await db.select().from(materials)).toHaveLength(1)
})

test('[MAT-012] optimistic locking: the second of two edits from the same revision is refused and changes nothing', async () => {
	const author = await makeActor(db, 'author')
	const created = await createMaterial(db, { actor: author, values: aspirin, now: new Date() })
	const id = created.ok ? created.value.id : ''
	const first = await updateMaterial(db, {
		actor: author,
		id,
		revision: 1,
		values: { ...aspirin, grade: 'USP' },
		now: new Date(),
	})
	expect(first).toEqual({ ok: true, value: { revision: 2 } })
	const second = await updateMaterial(db, {
		actor: author,
		id,
		revision: 1,
		values: { ...aspirin, name: 'Changed' },
		now: new Date(),
	})
	expect(second).toMatchObject({ ok: false, error: { status: 409 } })
	const [row] = await db.select().from(materials).where(eq(materials.id, id))
	expect(row).toMatchObject({ name: 'Acetylsalicylic acid', grade: 'USP', revision: 2 })
	const [event] = await db.select().from(auditEvents).where(eq(auditEvents.action, 'material.updated'))
	expect(event).toMatchObject({ before: { grade: 'Ph. Eur.' }, after: { grade: 'USP' } })
})

test('[MAT-013] the list filters by text (synonyms too), sorts, and pages on the server', async () => {
	const author = await makeActor(db, 'author')
	for (let index = 0; index < 25; index++) {
		await createMaterial(db, {
			actor: author,
			values: {
				code: `RM-${String(index).padStart(3, '0')}`,
				name: `Material ${index}`,
				synonyms: index === 7 ? 'Lucky seven' : '',
				grade: index % 2 ? 'USP' : 'Ph. Eur.',
			},
			now: new Date(),
		})
	}
	const query = (params: Record<string, string>) => MaterialListQuerySchema.parse(params)
	const first = await listMaterials(db, query({}))
	expect(first.total).toBe(25)
	expect(first.rows).toHaveLength(20)
	expect(first.pageCount).toBe(2)
	expect((await listMaterials(db, query({ page: '2' }))).rows).toHaveLength(5)
	expect((await listMaterials(db, query({ q: 'lucky' }))).rows.map((row) => row.code)).toEqual(['RM-007'])
	expect((await listMaterials(db, query({ grade: 'USP' }))).total).toBe(12)
	const descending = await listMaterials(db, query({ sort: 'code', dir: 'desc' }))
	expect(descending.rows[0]?.code).toBe('RM-024')
	// Unknown sort keys fall back to the default instead of failing.
	expect(query({ sort: 'drop table', page: '-3' })).toMatchObject({ sort: 'code', page: 1 })
})

test('[AUD-001] PostgreSQL itself refuses UPDATE and DELETE on audit events', async () => {
	const author = await makeActor(db, 'author')
	await createMaterial(db, { actor: author, values: aspirin, now: new Date() })
	const refusal = /audit events are append-only/
	await expect(db.execute(sql`update audit_events set action = 'tampered'`)).rejects.toMatchObject({
		cause: { message: expect.stringMatching(refusal) },
	})
	await expect(db.execute(sql`delete from audit_events`)).rejects.toMatchObject({
		cause: { message: expect.stringMatching(refusal) },
	})
	const rows = await db.select().from(auditEvents)
	expect(rows.length).toBeGreaterThan(0)
	expect(rows.some((row) => row.action === 'tampered')).toBe(false)
})
