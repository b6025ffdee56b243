import { createHash } from 'node:crypto'
import { eq, sql } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { dossiers } from '#app/.server/db/schema/dossiers.ts'
import { getDossier, listDossierRecords } from '#app/.server/services/dossiers.ts'
import { versionContentHash } from '#app/.server/services/spec-workflow.ts'
import { identifyDossier } from '#shared/dossier/identify.ts'
import { makeActor, makeSignedVersion, makeSubmittableDraft } from '#tests/support/factories.ts'
import { pdfPageTexts as pdfPages } from '#tests/support/pdf-text.ts'

async function cast() {
	return {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
}

test('[DOS-101] an effective version’s dossier is rendered once and every download is byte-identical (PRODUCT.md §6)', async () => {
	const people = await cast()
	const version = await makeSignedVersion(db, people)
	expect(version.state).toBe('effective')
	const first = await getDossier(db, {
		actor: people.approver,
		versionId: version.versionId,
		format: 'pdf',
		now: new Date(),
		purpose: 'download',
	})
	const second = await getDossier(db, {
		actor: people.approver,
		versionId: version.versionId,
		format: 'pdf',
		now: new Date(Date.now() + 60_000),
		purpose: 'download',
	})
	expect(first?.stored).toBe(true)
	expect(Buffer.from(second!.bytes).equals(Buffer.from(first!.bytes))).toBe(true)
	expect(first!.sha256).toBe(createHash('sha256').update(first!.bytes).digest('hex'))
	const rows = await db.select().from(dossiers).where(eq(dossiers.versionId, version.versionId))
	expect(rows).toHaveLength(1)
	expect(rows[0]).toMatchObject({
		format: 'pdf',
		versionState: 'effective',
		templateId: 'dossier',
		templateVersion: '1.1.0',
	})
	// Every download is in the audit trail (21 CFR 11.10(e); PRODUCT.md §7).
	const downloads = await db.select().from(auditEvents).where(eq(auditEvents.action, 'dossier.downloaded'))
	expect(downloads).toHaveLength(2)
	// The text carries the content hash the signatures sign, and no DRAFT mark (PRODUCT.md §6).
	const pages = await pdfPages(first!.bytes)
	const hash = (await versionContentHash(db, version.versionId))!.hash
	expect(pages.join(' ')).toContain(hash)
	expect(pages.some((page) => page.includes('DRAFT'))).toBe(false)
	pages.forEach((page, index) => expect(page).toContain(`Page ${index + 1} of ${pages.length}`))
})

test('[DOS-102] "verify a copy" names the document, version and template, and refuses a copy changed by one byte', async () => {
	const people = await cast()
	const version = await makeSignedVersion(db, people)
	for (const format of ['pdf', 'docx'] as const) {
		const file = (await getDossier(db, {
			actor: people.reviewer,
			versionId: version.versionId,
			format,
			now: new Date(),
			purpose: 'download',
		}))!
		const match = identifyDossier(await listDossierRecords(db, file.sha256), file.sha256)
		expect(match).toMatchObject({
			status: 'match',
			versionNumber: 1,
			format,
			template: { id: 'dossier', version: '1.1.0' },
		})
		const changed = new Uint8Array(file.bytes)
		const middle = Math.floor(changed.length / 2)
		changed[middle] = (changed[middle] ?? 0) ^ 0x01
		const changedHash = createHash('sha256').update(changed).digest('hex')
		expect(identifyDossier(await listDossierRecords(db, changedHash), changedHash)).toMatchObject({
			status: 'no-match',
		})
	}
})

test('[DOS-103] a draft renders on demand with the DRAFT mark on every page and is not stored', async () => {
	const author = await makeActor(db, 'author')
	const draft = await makeSubmittableDraft(db, author)
	const file = (await getDossier(db, {
		actor: author,
		versionId: draft.versionId,
		format: 'pdf',
		now: new Date(),
		purpose: 'preview',
	}))!
	expect(file.stored).toBe(false)
	expect(await db.select().from(dossiers)).toHaveLength(0)
	const pages = await pdfPages(file.bytes)
	expect(pages.length).toBeGreaterThan(1)
	for (const page of pages) expect(page).toContain('DRAFT')
})

test('[DOS-104] PostgreSQL refuses to change or remove a stored dossier', async () => {
	const people = await cast()
	const version = await makeSignedVersion(db, people)
	await getDossier(db, { actor: null, versionId: version.versionId, format: 'docx', now: new Date(), purpose: 'seed' })
	const refusal = { cause: { message: expect.stringMatching(/stored dossiers cannot be changed or removed/) } }
	await expect(db.execute(sql`update dossiers set sha256 = repeat('0', 64)`)).rejects.toMatchObject(refusal)
	await expect(db.execute(sql`delete from dossiers`)).rejects.toMatchObject(refusal)
})
