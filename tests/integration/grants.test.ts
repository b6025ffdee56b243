import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { actorContext } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { createGrant, inspectorAccess, listInspectableVersions, revokeGrant } from '#app/.server/services/grants.ts'
import { loader as inspectVersion } from '#app/routes/inspection/$versionId.tsx'
import { auditActionsFor, makeActor, makeSignedVersion, makeSubmittableDraft } from '#tests/support/factories.ts'

const DAY = 86_400_000
const isoDay = (date: Date) => date.toISOString().slice(0, 10)

async function setting() {
	const admin = await makeActor(db, 'admin')
	const inspector = await makeActor(db, 'inspector')
	const people = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const effective = await makeSignedVersion(db, people)
	const other = await makeSignedVersion(db, people)
	const draft = await makeSubmittableDraft(db, people.author)
	return { admin, inspector, effective, other, draft }
}

test('[INS-001] inside a grant an inspector sees the released versions of the covered specifications only (PRODUCT.md §2)', async () => {
	const { admin, inspector, effective, other, draft } = await setting()
	const now = new Date()
	const granted = await createGrant(db, {
		actor: admin,
		values: {
			inspectorId: inspector.id,
			purpose: 'Regulatory inspection',
			scope: 'chosen',
			specificationIds: [effective.specificationId, draft.specificationId],
			startsAt: isoDay(now),
			endsAt: isoDay(new Date(now.getTime() + 7 * DAY)),
		},
		now,
	})
	expect(granted.ok).toBe(true)
	const { versions } = await listInspectableVersions(db, inspector.id, now)
	expect(versions.map((version) => version.versionId)).toEqual([effective.versionId])
	expect(await inspectorAccess(db, inspector.id, effective.versionId, now)).not.toBeNull()
	// Not covered, and never a draft even when its specification is covered.
	expect(await inspectorAccess(db, inspector.id, other.versionId, now)).toBeNull()
	expect(await inspectorAccess(db, inspector.id, draft.versionId, now)).toBeNull()
})

test('[INS-002] a grant ends by itself at its end date, and a revoked grant shows nothing', async () => {
	const { admin, inspector, effective } = await setting()
	const now = new Date()
	const granted = await createGrant(db, {
		actor: admin,
		values: {
			inspectorId: inspector.id,
			purpose: 'Customer audit',
			scope: 'all',
			specificationIds: [],
			startsAt: isoDay(now),
			endsAt: isoDay(now),
		},
		now,
	})
	expect(await inspectorAccess(db, inspector.id, effective.versionId, now)).not.toBeNull()
	const nextDay = new Date(new Date(`${isoDay(now)}T00:00:00Z`).getTime() + DAY)
	expect(await inspectorAccess(db, inspector.id, effective.versionId, nextDay)).toBeNull()
	expect((await listInspectableVersions(db, inspector.id, nextDay)).grants).toEqual([])
	// The route answers 403 once the grant has ended (here: revoked), on the server.
	const context = new RouterContextProvider()
	context.set(actorContext, inspector)
	const args = {
		request: new Request(`http://localhost/inspection/${effective.versionId}`),
		context,
		params: { versionId: effective.versionId },
	}
	await expect(inspectVersion(args as never)).resolves.toMatchObject({ version: { id: effective.versionId } })
	expect(await auditActionsFor(db, effective.versionId)).toContain('inspection.viewed')
	await revokeGrant(db, { actor: admin, grantId: granted.ok ? granted.value.grantId : '', now: new Date() })
	await expect(inspectVersion(args as never)).rejects.toMatchObject({ init: { status: 403 } })
})

test('[INS-003] only accounts with the inspector role can be given a grant', async () => {
	const { admin } = await setting()
	const author = await makeActor(db, 'author')
	const now = new Date()
	const refused = await createGrant(db, {
		actor: admin,
		values: {
			inspectorId: author.id,
			purpose: 'Regulatory inspection',
			scope: 'all',
			specificationIds: [],
			startsAt: isoDay(now),
			endsAt: isoDay(now),
		},
		now,
	})
	expect(refused.ok).toBe(false)
})
