import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { listSpecifications, SPECIFICATION_PAGE_SIZE } from '#app/.server/queries/specifications.ts'
import { createSpecification, startNextVersion } from '#app/.server/services/specifications.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { makeActor, makeMaterial, makeSignedVersion } from '#tests/support/factories.ts'

async function makeSpecifications(author: Actor, materialId: string, count: number): Promise<Array<string>> {
	const ids: Array<string> = []
	for (let n = 1; n <= count; n++) {
		const created = await createSpecification(db, {
			actor: author,
			materialId,
			title: `Identity by FTIR ${n}`,
			now: new Date(),
		})
		if (!created.ok) throw created.error
		ids.push(created.value.specificationId)
	}
	return ids
}

test('[SPEC-LIST-001] the library lists one page of specifications at a time, each with its latest version, filtered and counted exactly', async () => {
	const cast = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const other = await makeActor(db, 'author')
	const lactose = await makeMaterial(db, cast.author, 'Lactose monohydrate')
	const starch = await makeMaterial(db, other, 'Maize starch')
	const mine = await makeSpecifications(cast.author, lactose, 26)
	const theirs = await makeSpecifications(other, starch, 3)
	// One effective specification that has started its second version: the list shows v2, a draft.
	const signed = await makeSignedVersion(db, cast)
	const next = await startNextVersion(db, {
		actor: cast.author,
		specificationId: signed.specificationId,
		changeReason: 'Tighter band tolerance',
		now: new Date(),
	})
	if (!next.ok) throw next.error
	const everyId = [...mine, ...theirs, signed.specificationId]

	const first = await listSpecifications(db, { page: 1 })
	const second = await listSpecifications(db, { page: 2 })
	expect(first).toMatchObject({ total: everyId.length, pageCount: 2 })
	expect(first.rows).toHaveLength(SPECIFICATION_PAGE_SIZE)
	expect(second.rows).toHaveLength(everyId.length - SPECIFICATION_PAGE_SIZE)
	const listed = [...first.rows, ...second.rows]
	expect(listed.map((row) => row.id).sort()).toEqual([...everyId].sort())
	const numbers = listed.map((row) => row.documentNumber)
	expect(numbers).toEqual([...numbers].sort())
	expect((await listSpecifications(db, { page: 3 })).rows).toEqual([])

	const revised = listed.find((row) => row.id === signed.specificationId)!
	expect(revised).toMatchObject({ versionId: next.value.versionId, versionNumber: 2, state: 'draft' })

	// The state filter looks at the latest version only: v1 is still effective, but the list shows v2.
	expect((await listSpecifications(db, { page: 1, state: 'effective' })).total).toBe(0)
	expect((await listSpecifications(db, { page: 1, state: 'draft' })).total).toBe(everyId.length)
	const byOwner = await listSpecifications(db, { page: 1, ownerId: other.id })
	expect(byOwner.rows.map((row) => row.id).sort()).toEqual([...theirs].sort())
	expect(byOwner.total).toBe(3)
	expect((await listSpecifications(db, { page: 1, materialId: starch })).total).toBe(3)
	const searched = await listSpecifications(db, { page: 1, q: 'maize' })
	expect(searched).toMatchObject({ total: 3, pageCount: 1 })
	expect(searched.rows.every((row) => row.materialName === 'Maize starch')).toBe(true)
	expect((await listSpecifications(db, { page: 1, q: 'maize', state: 'in_review' })).total).toBe(0)
	expect(first.owners.map((owner) => owner.id).sort()).toEqual([cast.author.id, other.id].sort())
})
