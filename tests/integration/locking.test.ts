import { eq, sql } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { evidence, signatures, specVersions } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { versionContentHash } from '#app/.server/services/spec-workflow.ts'
import { recordComparison } from '#app/.server/services/specifications.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import {
	makeActor,
	makeSignedVersion,
	makeSubmittableDraft,
	storeSharedSpectrum,
	takeStep,
} from '#tests/support/factories.ts'

const DAY = 24 * 60 * 60 * 1000
/** PostgreSQL's insufficient_privilege, raised by every locking trigger of migration 0003. */
const REFUSED = '42501'

/** A rejection by the database: Drizzle wraps the driver's error, whose SQLSTATE and message the trigger set. */
const refusedWith = (message: RegExp) => ({ cause: { code: REFUSED, message: expect.stringMatching(message) } })

async function cast() {
	return {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
}

/** Approved today, effective tomorrow: locked, still in the state 'approved'. */
async function approvedVersion(people: { author: Actor; reviewer: Actor; approver: Actor }) {
	const version = await makeSignedVersion(db, people, { effectiveFrom: new Date(Date.now() + DAY) })
	expect(version.state).toBe('approved')
	return version
}

async function versionRow(versionId: string) {
	const [row] = await db.select().from(specVersions).where(eq(specVersions.id, versionId))
	return row!
}

function evidenceRow(versionId: string, createdBy: string) {
	return {
		versionId,
		kind: 'comparison' as const,
		title: 'Entered by hand',
		verdict: 'conforms',
		correlation: 0.999,
		result: { verdict: 'conforms' },
		algorithmVersion: 'manual',
		params: {},
		inputChecksums: {},
		createdBy,
	}
}

test('[LCK-001] after approval a direct SQL UPDATE of the version content fails with the trigger message; on a draft it succeeds — 21 CFR 11.10(a), (f) — FACTS.md §3.1; PRODUCT.md §7', async () => {
	const people = await cast()
	const version = await approvedVersion(people)
	const before = await versionRow(version.versionId)
	const locked = new RegExp(
		`specification version ${version.versionId} is locked: its content cannot change \\(UPDATE refused\\)`,
	)

	await expect(
		db.execute(
			sql`update spec_versions set content = jsonb_set(content, '{scope}', '"Any grade"') where id = ${version.versionId}`,
		),
	).rejects.toMatchObject(refusedWith(locked))
	// The band table lives in the content: a changed band position is refused the same way.
	await expect(
		db.execute(
			sql`update spec_versions set content = jsonb_set(content, '{bands,0,position}', '1600') where id = ${version.versionId}`,
		),
	).rejects.toMatchObject(refusedWith(locked))
	for (const assignment of [
		sql`change_reason = 'Edited afterwards'`,
		sql`reference_spectrum_id = null`,
		sql`content_sha256 = repeat('0', 64)`,
		sql`locked_at = null`,
		sql`effective_from = now()`,
		sql`editor_ids = array[]::text[]`,
		sql`revision = revision + 1`,
	]) {
		await expect(
			db.execute(sql`update spec_versions set ${assignment} where id = ${version.versionId}`),
		).rejects.toMatchObject(refusedWith(locked))
	}
	// Backwards moves of the lifecycle are refused too (migration 0007: forward steps only).
	for (const state of ['draft', 'in_review']) {
		await expect(
			db.execute(sql`update spec_versions set state = ${state} where id = ${version.versionId}`),
		).rejects.toMatchObject(refusedWith(/is not a forward step \(UPDATE refused\)/))
	}
	expect(await versionRow(version.versionId)).toEqual(before)
	// What was signed still verifies: the content hash is the one both signatures carry.
	const hashed = await versionContentHash(db, version.versionId)
	const signed = await db
		.select({ contentSha256: signatures.contentSha256 })
		.from(signatures)
		.where(eq(signatures.versionId, version.versionId))
	expect(signed).toEqual([{ contentSha256: hashed!.hash }, { contentSha256: hashed!.hash }])

	const draft = await makeSubmittableDraft(db, people.author)
	await db.execute(
		sql`update spec_versions set content = jsonb_set(content, '{scope}', '"Any grade"') where id = ${draft.versionId}`,
	)
	expect(await versionRow(draft.versionId)).toMatchObject({ content: { scope: 'Any grade' } })
})

test('[LCK-002] a direct SQL DELETE of an approved version fails; a draft can still be removed — 21 CFR 11.10(c) — FACTS.md §3.1', async () => {
	const people = await cast()
	const version = await approvedVersion(people)
	await expect(db.execute(sql`delete from spec_versions where id = ${version.versionId}`)).rejects.toMatchObject(
		refusedWith(new RegExp(`specification version ${version.versionId} is locked: DELETE refused`)),
	)
	expect(await versionRow(version.versionId)).toMatchObject({ state: 'approved' })

	const draft = await makeSubmittableDraft(db, people.author)
	await db.execute(sql`delete from spec_versions where id = ${draft.versionId}`)
	expect(await db.select().from(specVersions).where(eq(specVersions.id, draft.versionId))).toEqual([])
})

test('[LCK-003] the reference spectrum of an approved version cannot be updated or deleted; an unreferenced one can — 21 CFR 11.10(a) — FACTS.md §3.1; PRODUCT.md §7', async () => {
	const people = await cast()
	const version = await approvedVersion(people)
	const [before] = await db.select().from(spectra).where(eq(spectra.id, version.referenceSpectrumId))
	expect(before?.lockedAt).not.toBeNull()
	const locked = (operation: string) =>
		refusedWith(new RegExp(`spectrum ${version.referenceSpectrumId} is locked: .* \\(${operation} refused\\)`))

	for (const assignment of [
		sql`notes = 'relabelled'`,
		sql`file_name = 'other.jdx'`,
		sql`y = x`,
		sql`original_bytes = '\\x00'::bytea`,
		sql`locked_at = null`,
	]) {
		await expect(
			db.execute(sql`update spectra set ${assignment} where id = ${version.referenceSpectrumId}`),
		).rejects.toMatchObject(locked('UPDATE'))
	}
	await expect(db.execute(sql`delete from spectra where id = ${version.referenceSpectrumId}`)).rejects.toMatchObject(
		locked('DELETE'),
	)
	const [after] = await db.select().from(spectra).where(eq(spectra.id, version.referenceSpectrumId))
	expect(after).toEqual(before)

	const other = await storeSharedSpectrum(db, people.author, 'compounds/3_chloroaniline_pe1000.jdx')
	await db.execute(sql`update spectra set notes = 'relabelled' where id = ${other.id}`)
	await db.execute(sql`delete from spectra where id = ${other.id}`)
	expect(await db.select().from(spectra).where(eq(spectra.id, other.id))).toEqual([])
})

test('[LCK-004] signatures cannot be changed or deleted; the only change allowed is setting voided_at, once — 21 CFR 11.70 — FACTS.md §3.1', async () => {
	const people = await cast()
	const version = await approvedVersion(people)
	const before = await db
		.select()
		.from(signatures)
		.where(eq(signatures.versionId, version.versionId))
		.orderBy(signatures.id)
	const refused = (operation: string) =>
		refusedWith(new RegExp(`signatures cannot be changed or removed \\(${operation} refused\\)`))

	for (const assignment of [
		sql`printed_name = 'Someone Else'`,
		sql`signer_id = ${people.author.id}`,
		sql`meaning = 'reviewed'`,
		sql`signed_at = signed_at - interval '1 day'`,
		sql`content_sha256 = repeat('0', 64)`,
		sql`version_id = version_id`,
		sql`voided_at = now(), printed_name = 'Someone Else'`,
	]) {
		await expect(
			db.execute(sql`update signatures set ${assignment} where version_id = ${version.versionId}`),
		).rejects.toMatchObject(refused('UPDATE'))
	}
	await expect(db.execute(sql`delete from signatures where version_id = ${version.versionId}`)).rejects.toMatchObject(
		refused('DELETE'),
	)
	expect(
		await db.select().from(signatures).where(eq(signatures.versionId, version.versionId)).orderBy(signatures.id),
	).toEqual(before)

	// Voiding, as a rejection does: allowed once, never undone or repeated.
	const { versionId } = await makeSubmittableDraft(db, people.author)
	await takeStep(db, people.author, versionId, { type: 'submit' })
	await takeStep(db, people.reviewer, versionId, { type: 'sign', meaning: 'reviewed', reauthenticated: true })
	const voidedAt = new Date('2026-03-02T10:00:00Z')
	await db.execute(sql`update signatures set voided_at = ${voidedAt.toISOString()} where version_id = ${versionId}`)
	await expect(
		db.execute(sql`update signatures set voided_at = now() where version_id = ${versionId}`),
	).rejects.toMatchObject(refused('UPDATE'))
	await expect(
		db.execute(sql`update signatures set voided_at = null where version_id = ${versionId}`),
	).rejects.toMatchObject(refused('UPDATE'))
	expect(
		await db.select({ voidedAt: signatures.voidedAt }).from(signatures).where(eq(signatures.versionId, versionId)),
	).toEqual([{ voidedAt }])
})

test('[LCK-005] a locked version still moves forward (effective → superseded) but never back to draft or review — 21 CFR 11.10(f) — FACTS.md §3.1', async () => {
	const people = await cast()
	const version = await makeSignedVersion(db, people)
	expect(version.state).toBe('effective')
	const locked = refusedWith(new RegExp(`specification version ${version.versionId} is locked`))
	await expect(
		db.execute(sql`update spec_versions set state = 'draft' where id = ${version.versionId}`),
	).rejects.toMatchObject(locked)
	await expect(
		db.execute(sql`update spec_versions set state = 'in_review' where id = ${version.versionId}`),
	).rejects.toMatchObject(locked)

	const supersededAt = new Date('2026-03-02T10:00:00Z')
	await db.execute(
		sql`update spec_versions set state = 'superseded', superseded_at = ${supersededAt.toISOString()} where id = ${version.versionId}`,
	)
	expect(await versionRow(version.versionId)).toMatchObject({ state: 'superseded', supersededAt })
	await expect(
		db.execute(sql`update spec_versions set state = 'draft' where id = ${version.versionId}`),
	).rejects.toMatchObject(locked)
})

test('[LCK-006] evidence cannot be added to, changed in or removed from a locked version — 21 CFR 11.10(a) — FACTS.md §3.1', async () => {
	const people = await cast()
	const draft = await makeSubmittableDraft(db, people.author)
	const [kept] = await db
		.insert(evidence)
		.values(evidenceRow(draft.versionId, people.author.id))
		.returning({ id: evidence.id })
	await takeStep(db, people.author, draft.versionId, { type: 'submit' })
	await takeStep(db, people.reviewer, draft.versionId, { type: 'sign', meaning: 'reviewed', reauthenticated: true })
	await takeStep(db, people.approver, draft.versionId, {
		type: 'sign',
		meaning: 'approved',
		reauthenticated: true,
		effectiveFrom: new Date(),
	})
	const refused = (operation: string) =>
		refusedWith(new RegExp(`evidence of locked version ${draft.versionId} cannot change \\(${operation} refused\\)`))

	await expect(db.insert(evidence).values(evidenceRow(draft.versionId, people.author.id))).rejects.toMatchObject(
		refused('INSERT'),
	)
	await expect(
		db.execute(sql`update evidence set verdict = 'does-not-conform' where id = ${kept!.id}`),
	).rejects.toMatchObject(refused('UPDATE'))
	await expect(db.execute(sql`delete from evidence where id = ${kept!.id}`)).rejects.toMatchObject(refused('DELETE'))
	expect(await db.select({ id: evidence.id, verdict: evidence.verdict }).from(evidence)).toEqual([
		{ id: kept!.id, verdict: 'conforms' },
	])
	// The service refuses before the database has to.
	const sample = await storeSharedSpectrum(db, people.author, 'compounds/4_chloroaniline_solid_pe1000_single.jdx')
	expect(
		await recordComparison(db, {
			actor: people.author,
			versionId: draft.versionId,
			sampleSpectrumId: sample.id,
			now: new Date(),
		}),
	).toMatchObject({
		ok: false,
		error: { status: 409 },
	})
})
