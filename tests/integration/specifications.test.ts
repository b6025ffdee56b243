import { createHash } from 'node:crypto'
import { and, eq, sql } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { evidence, specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import {
	acceptThresholdSuggestion,
	BandTableInvalid,
	createSpecification,
	parseContent,
	recordComparison,
	recordSpecificity,
	saveDraft,
	startNextVersion,
} from '#app/.server/services/specifications.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import type { BandRow, SpecVersionContent } from '#shared/specs/version-content.ts'
import { ENGINE_VERSION } from '#shared/spectra/preprocess.ts'
import { auditActionsFor, makeActor, makeMaterial, storeSharedSpectrum } from '#tests/support/factories.ts'

const PARA = 'compounds/4_chloroaniline_solid_pe1000.jdx'
const PARA_SAME_MEASUREMENT = 'compounds/4_chloroaniline_solid_pe1000_single.jdx'
const META = 'compounds/3_chloroaniline_pe1000.jdx'
const ORTHO = 'compounds/2_chloroaniline_pe1000.jdx'

const sha256 = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex')

/** A new specification (first version: a draft at revision 1) for a new material. */
async function makeDraft(author: Actor, materialId?: string) {
	const material = materialId ?? (await makeMaterial(db, author))
	const created = await createSpecification(db, {
		actor: author,
		materialId: material,
		title: 'Identity by FTIR',
		now: new Date(),
	})
	if (!created.ok) throw created.error
	return { ...created.value, materialId: material }
}

async function versionRow(versionId: string) {
	const [row] = await db.select().from(specVersions).where(eq(specVersions.id, versionId))
	if (!row) throw new Error(`no version ${versionId}`)
	return { ...row, content: parseContent(row.content) }
}

/** Saves `change(content)` on the draft at its current revision; throws unless saved. */
async function edit(author: Actor, versionId: string, change: (content: SpecVersionContent) => SpecVersionContent) {
	const current = await versionRow(versionId)
	const saved = await saveDraft(db, {
		actor: author,
		versionId,
		revision: current.revision,
		content: change(current.content),
		changeReason: current.changeReason,
		now: new Date(),
	})
	if (!saved.ok) throw saved.error
	return saved.value
}

function band(id: string, position: number, overrides: Partial<BandRow> = {}): BandRow {
	return {
		id,
		position,
		tolerance: null,
		assignment: 'assigned',
		intensityClass: 's',
		shape: 'sharp',
		required: true,
		...overrides,
	}
}

/** Messages of an error and its causes (Drizzle wraps the driver's error). */
async function databaseRefusal(run: () => Promise<unknown>): Promise<string> {
	try {
		await run()
	} catch (error) {
		const messages: Array<string> = []
		for (let current: unknown = error; current instanceof Error; current = current.cause) messages.push(current.message)
		return messages.join(' | ')
	}
	return 'no error'
}

test('[SPEC-001] document numbers come from the default pattern in sequence: QC-IR-0001, then QC-IR-0002', async () => {
	// The sequence is not a table, so emptying the tables before each test does not restart it.
	await db.execute(sql`alter sequence specification_number_seq restart with 1`)
	const author = await makeActor(db, 'author')
	const first = await makeDraft(author)
	const second = await makeDraft(author)
	expect([first.documentNumber, second.documentNumber]).toEqual(['QC-IR-0001', 'QC-IR-0002'])
	const rows = await db
		.select({ documentNumber: specifications.documentNumber })
		.from(specifications)
		.orderBy(specifications.documentNumber)
	expect(rows.map((row) => row.documentNumber)).toEqual(['QC-IR-0001', 'QC-IR-0002'])
	const [version] = await db.select().from(specVersions).where(eq(specVersions.id, first.versionId))
	expect(version).toMatchObject({ versionNumber: 1, state: 'draft', revision: 1, authorId: author.id })
	expect(await auditActionsFor(db, first.specificationId)).toEqual(['specification.created'])
})

test('[SPEC-001] a custom pattern fills the year and pads the sequence to its width', async () => {
	await db.execute(sql`alter sequence specification_number_seq restart with 7`)
	const author = await makeActor(db, 'author')
	const materialId = await makeMaterial(db, author)
	const create = (pattern?: string) =>
		createSpecification(db, {
			actor: author,
			materialId,
			title: 'Identity',
			now: new Date('2026-03-15T10:00:00Z'),
			pattern,
		})
	expect(await create('IR-{yyyy}-{seq:3}')).toMatchObject({ ok: true, value: { documentNumber: 'IR-2026-007' } })
	const previous = process.env.SPEC_NUMBER_PATTERN
	process.env.SPEC_NUMBER_PATTERN = 'LAB/{seq:2}/{yyyy}'
	try {
		expect(await create()).toMatchObject({ ok: true, value: { documentNumber: 'LAB/08/2026' } })
	} finally {
		if (previous === undefined) delete process.env.SPEC_NUMBER_PATTERN
		else process.env.SPEC_NUMBER_PATTERN = previous
	}
})

test('[SPEC-002] optimistic locking: of two saves from the same revision the second is refused with 409 and writes nothing', async () => {
	const alice = await makeActor(db, 'author')
	const bob = await makeActor(db, 'author')
	const { versionId } = await makeDraft(alice)
	const opened = await versionRow(versionId)
	const first = await saveDraft(db, {
		actor: alice,
		versionId,
		revision: opened.revision,
		content: { ...opened.content, scope: 'Alice: all grades' },
		changeReason: null,
		now: new Date(),
	})
	expect(first).toEqual({ ok: true, value: { revision: 2 } })
	const second = await saveDraft(db, {
		actor: bob,
		versionId,
		revision: opened.revision,
		content: { ...opened.content, scope: 'Bob: USP grade only' },
		changeReason: null,
		now: new Date(),
	})
	expect(second).toMatchObject({
		ok: false,
		error: { status: 409, message: expect.stringContaining('Someone else saved this draft') },
	})
	const after = await versionRow(versionId)
	expect(after).toMatchObject({ revision: 2, editorIds: [alice.id] })
	expect(after.content.scope).toBe('Alice: all grades')
	const saves = await db
		.select()
		.from(auditEvents)
		.where(and(eq(auditEvents.entityId, versionId), eq(auditEvents.action, 'spec-version.saved')))
	expect(saves).toHaveLength(1)
	expect(saves[0]).toMatchObject({ actorId: alice.id, before: { scope: '' }, after: { scope: 'Alice: all grades' } })
	// Bob, having reloaded, saves at the current revision.
	const retried = await saveDraft(db, {
		actor: bob,
		versionId,
		revision: 2,
		content: { ...after.content, scope: 'Bob: USP grade only' },
		changeReason: null,
		now: new Date(),
	})
	expect(retried).toEqual({ ok: true, value: { revision: 3 } })
	expect((await versionRow(versionId)).editorIds).toEqual([alice.id, bob.id])
})

test('[SPEC-003] only drafts can be edited: a version in review refuses a save with 409 and keeps its content', async () => {
	const author = await makeActor(db, 'author')
	const { versionId } = await makeDraft(author)
	await edit(author, versionId, (content) => ({ ...content, scope: 'As submitted' }))
	await db
		.update(specVersions)
		.set({ state: 'in_review', submittedAt: new Date() })
		.where(eq(specVersions.id, versionId))
	const current = await versionRow(versionId)
	const refused = await saveDraft(db, {
		actor: author,
		versionId,
		revision: current.revision,
		content: { ...current.content, scope: 'Changed in review' },
		changeReason: null,
		now: new Date(),
	})
	expect(refused).toMatchObject({
		ok: false,
		error: { status: 409, message: expect.stringContaining('Only drafts can be edited. This version is in review') },
	})
	expect(await versionRow(versionId)).toMatchObject({ revision: current.revision, content: { scope: 'As submitted' } })
})

test('[SPEC-004] band table: a position outside the method range and two overlapping rows are refused with their row ids', async () => {
	const author = await makeActor(db, 'author')
	const { versionId } = await makeDraft(author)
	const opened = await versionRow(versionId)
	// Default tolerance 0.5 % of the position (Ph. Eur. 2.2.24 via FACTS.md §1.1): ±8.0 at 1600 and ±8.05 at 1610 overlap.
	const bands = [band('outside', 4100), band('amine', 1600), band('too-close', 1610), band('fine', 1090)]
	const refused = await saveDraft(db, {
		actor: author,
		versionId,
		revision: opened.revision,
		content: { ...opened.content, bands },
		changeReason: null,
		now: new Date(),
	})
	expect(refused.ok).toBe(false)
	const error = refused.ok ? null : refused.error
	expect(error).toBeInstanceOf(BandTableInvalid)
	expect(error?.status).toBe(422)
	const problems = error instanceof BandTableInvalid ? error.problems : []
	expect(problems.map((problem) => [problem.rowId, problem.field]).sort()).toEqual([
		['outside', 'position'],
		['too-close', 'row'],
	])
	expect(problems.find((problem) => problem.rowId === 'outside')?.message).toContain(
		"outside the method's range (650–4000 cm⁻¹)",
	)
	expect(await versionRow(versionId)).toMatchObject({ revision: 1, content: { bands: [] } })
	// Narrowed tolerances no longer overlap; an empty assignment is accepted.
	const fixed = [
		band('amine', 1600, { tolerance: 4 }),
		band('too-close', 1610, { tolerance: 4, assignment: '' }),
		band('fine', 1090),
	]
	const saved = await saveDraft(db, {
		actor: author,
		versionId,
		revision: opened.revision,
		content: { ...opened.content, bands: fixed },
		changeReason: null,
		now: new Date(),
	})
	expect(saved).toEqual({ ok: true, value: { revision: 2 } })
	expect((await versionRow(versionId)).content.bands).toEqual(fixed)
})

test('[SPEC-005] an unknown reference spectrum is refused on save', async () => {
	const author = await makeActor(db, 'author')
	const { versionId } = await makeDraft(author)
	const opened = await versionRow(versionId)
	const refused = await saveDraft(db, {
		actor: author,
		versionId,
		revision: 1,
		content: { ...opened.content, referenceSpectrumId: '00000000-0000-4000-8000-000000000000' },
		changeReason: null,
		now: new Date(),
	})
	expect(refused).toMatchObject({ ok: false, error: { status: 404 } })
	expect((await versionRow(versionId)).revision).toBe(1)
})

test('[EVD-001] comparisons with real spectra: the same measurement conforms, a positional isomer does not; evidence is reproducible', async () => {
	const author = await makeActor(db, 'author')
	const materialId = await makeMaterial(db, author, '4-Chloroaniline')
	const reference = await storeSharedSpectrum(db, author, PARA, { purpose: 'reference', materialId })
	const same = await storeSharedSpectrum(db, author, PARA_SAME_MEASUREMENT, { purpose: 'sample' })
	const isomer = await storeSharedSpectrum(db, author, META, { purpose: 'sample' })
	const { versionId } = await makeDraft(author, materialId)
	const noReference = await recordComparison(db, {
		actor: author,
		versionId,
		sampleSpectrumId: same.id,
		now: new Date(),
	})
	expect(noReference).toMatchObject({
		ok: false,
		error: { status: 422, message: expect.stringContaining('Choose the reference spectrum') },
	})
	await edit(author, versionId, (content) => ({ ...content, referenceSpectrumId: reference.id }))
	// SOURCES.md: the two 4-chloroaniline files are the same measurement (correlation 1.000).
	const conforms = await recordComparison(db, { actor: author, versionId, sampleSpectrumId: same.id, now: new Date() })
	expect(conforms).toMatchObject({ ok: true, value: { verdict: 'conforms' } })
	// SOURCES.md: 3-chloroaniline is a positional isomer of 4-chloroaniline, a "must not match" case.
	const differs = await recordComparison(db, { actor: author, versionId, sampleSpectrumId: isomer.id, now: new Date() })
	expect(differs).toMatchObject({ ok: true, value: { verdict: 'does-not-conform' } })
	const [good] = await db
		.select()
		.from(evidence)
		.where(eq(evidence.id, conforms.ok ? conforms.value.evidenceId : ''))
	expect(good).toMatchObject({
		versionId,
		kind: 'comparison',
		sampleSpectrumId: same.id,
		verdict: 'conforms',
		algorithmVersion: ENGINE_VERSION,
		inputChecksums: { reference: sha256(reference.bytes), sample: sha256(same.bytes) },
		createdBy: author.id,
	})
	expect(good!.correlation).toBeGreaterThan(0.999)
	expect(good!.params).toEqual(expect.any(Object))
	expect(Object.keys(good!.params as object).length).toBeGreaterThan(0)
	const [bad] = await db
		.select()
		.from(evidence)
		.where(eq(evidence.id, differs.ok ? differs.value.evidenceId : ''))
	expect(bad).toMatchObject({
		verdict: 'does-not-conform',
		inputChecksums: { reference: sha256(reference.bytes), sample: sha256(isomer.bytes) },
	})
	expect(bad!.correlation).toBeLessThan(0.95)
	expect((bad!.result as { reasons: Array<string> }).reasons.join(' ')).toContain('below the minimum 0.95')
	expect((await auditActionsFor(db, versionId)).filter((action) => action === 'evidence.recorded')).toHaveLength(2)
})

test("[EVD-002] specificity against other materials' references names the nearest non-target and the margin; a replicate gives a threshold suggestion", async () => {
	const author = await makeActor(db, 'author')
	const para = await makeMaterial(db, author, '4-Chloroaniline')
	const meta = await makeMaterial(db, author, '3-Chloroaniline')
	const ortho = await makeMaterial(db, author, '2-Chloroaniline')
	const reference = await storeSharedSpectrum(db, author, PARA, { purpose: 'reference', materialId: para })
	await storeSharedSpectrum(db, author, META, { purpose: 'reference', materialId: meta })
	await storeSharedSpectrum(db, author, ORTHO, { purpose: 'reference', materialId: ortho })
	const { versionId } = await makeDraft(author, para)
	await edit(author, versionId, (content) => ({ ...content, referenceSpectrumId: reference.id }))

	// SOURCES.md: 2- and 3-chloroaniline are positional isomers of 4-chloroaniline ("must not match").
	const first = await recordSpecificity(db, { actor: author, versionId, now: new Date() })
	expect(first.ok).toBe(true)
	const [record] = await db
		.select()
		.from(evidence)
		.where(eq(evidence.id, first.ok ? first.value.evidenceId : ''))
	type Summary = {
		nearest: { material: string; correlation: number; fileName: string; materialName: string } | null
		comparedWith: number
		margin: number
		specific: boolean
		thinMargin: boolean
		replicates: Array<number>
		suggestion: { threshold: number; lowestReplicate: number; nearestNonTarget: number } | null
	}
	const summary = record!.result as Summary
	expect(summary.comparedWith).toBe(2)
	// The nearest is 2-chloroaniline: pairwise, the engine correlates it at about 0.43 with the 4-isomer and
	// 3-chloroaniline at about 0.18 (`cli compare` on the same files; engine output, no outside source).
	expect(summary.nearest).toMatchObject({
		material: ortho,
		fileName: '2_chloroaniline_pe1000.jdx',
		materialName: expect.stringContaining('2-Chloroaniline'),
	})
	expect(summary.nearest!.correlation).toBeGreaterThan(0.3)
	expect(summary.nearest!.correlation).toBeLessThan(0.6)
	expect(summary.margin).toBeCloseTo(0.95 - summary.nearest!.correlation, 12)
	expect(first.ok && first.value.margin).toBeCloseTo(summary.margin, 12)
	expect(summary.specific).toBe(true)
	expect(summary.suggestion).toBeNull()
	expect(summary.thinMargin).toBe(false)
	expect(record).toMatchObject({
		kind: 'specificity',
		verdict: 'specific',
		algorithmVersion: ENGINE_VERSION,
		params: { threshold: 0.95 },
	})
	expect((record!.inputChecksums as { reference: string }).reference).toBe(sha256(reference.bytes))
	expect(record!.correlation).toBeCloseTo(summary.nearest!.correlation, 5)
	const noSuggestion = await acceptThresholdSuggestion(db, {
		actor: author,
		versionId,
		evidenceId: record!.id,
		now: new Date(),
	})
	expect(noSuggestion).toMatchObject({ ok: false, error: { status: 422 } })

	// A second reference file of the target material counts as a replicate. SOURCES.md: this one is the same
	// measurement in another file, not an independent replicate, so it checks the mechanism, not a realistic threshold.
	await storeSharedSpectrum(db, author, PARA_SAME_MEASUREMENT, { purpose: 'reference', materialId: para })
	const second = await recordSpecificity(db, { actor: author, versionId, now: new Date('2026-04-01T09:00:00Z') })
	const [withReplicate] = await db
		.select()
		.from(evidence)
		.where(eq(evidence.id, second.ok ? second.value.evidenceId : ''))
	expect((withReplicate!.result as Summary).replicates).toHaveLength(1)
	expect((withReplicate!.result as Summary).nearest?.material).toBe(ortho)
	const suggestion = (withReplicate!.result as Summary).suggestion
	expect(suggestion).not.toBeNull()
	expect(suggestion!.lowestReplicate).toBeGreaterThan(0.999)
	expect(suggestion!.nearestNonTarget).toBeCloseTo(summary.nearest!.correlation, 6)
	expect(suggestion!.threshold).toBeGreaterThan(suggestion!.nearestNonTarget)
	expect(suggestion!.threshold).toBeLessThan(suggestion!.lowestReplicate)

	const before = await versionRow(versionId)
	const accepted = await acceptThresholdSuggestion(db, {
		actor: author,
		versionId,
		evidenceId: withReplicate!.id,
		now: new Date('2026-04-02T09:00:00Z'),
	})
	expect(accepted).toEqual({ ok: true, value: { revision: before.revision + 1, threshold: suggestion!.threshold } })
	const after = await versionRow(versionId)
	expect(after.content.criteria.minCorrelation).toBe(suggestion!.threshold)
	expect(after.content.criteria.thresholdJustification).toContain(`Minimum correlation ${suggestion!.threshold}`)
	expect(after.content.criteria.thresholdJustification).toContain(suggestion!.lowestReplicate.toFixed(4))
	expect(after.content.criteria.thresholdJustification).toContain(suggestion!.nearestNonTarget.toFixed(4))
	expect(after.content.criteria.thresholdJustification).toContain('2026-04-02')
	const [saved] = await db
		.select()
		.from(auditEvents)
		.where(eq(auditEvents.action, 'spec-version.saved'))
		.orderBy(sql`${auditEvents.id} desc`)
		.limit(1)
	expect(saved).toMatchObject({ entityId: versionId, after: { criteria: { minCorrelation: suggestion!.threshold } } })
})

test('[VER-001] a next version is refused while a draft is open; from an effective version it copies the content with the reason', async () => {
	const author = await makeActor(db, 'author')
	const { specificationId, versionId } = await makeDraft(author)
	await edit(author, versionId, (content) => ({
		...content,
		scope: 'All suppliers',
		bands: [band('nh', 3474, { tolerance: 5 })],
	}))
	const refused = await startNextVersion(db, {
		actor: author,
		specificationId,
		changeReason: 'Tighten the NH tolerance',
		now: new Date(),
	})
	expect(refused).toMatchObject({
		ok: false,
		error: { status: 409, message: expect.stringContaining('Version 1 is still draft') },
	})
	expect(
		await db
			.select({ id: specVersions.id })
			.from(specVersions)
			.where(eq(specVersions.specificationId, specificationId)),
	).toHaveLength(1)

	await db.execute(
		sql`update spec_versions set state = 'effective', effective_at = now(), locked_at = now() where id = ${versionId}`,
	)
	const next = await startNextVersion(db, {
		actor: author,
		specificationId,
		changeReason: 'Tighten the NH tolerance',
		now: new Date(),
	})
	expect(next).toMatchObject({ ok: true, value: { versionNumber: 2 } })
	const created = await versionRow(next.ok ? next.value.versionId : '')
	const source = await versionRow(versionId)
	expect(created).toMatchObject({
		state: 'draft',
		revision: 1,
		versionNumber: 2,
		changeReason: 'Tighten the NH tolerance',
		editorIds: [author.id],
		lockedAt: null,
	})
	expect(created.content).toEqual(source.content)
	const [event] = await db
		.select()
		.from(auditEvents)
		.where(and(eq(auditEvents.entityId, created.id), eq(auditEvents.action, 'spec-version.created')))
	expect(event).toMatchObject({ reason: 'Tighten the NH tolerance', after: { versionNumber: 2, copiedFrom: 1 } })
	const again = await startNextVersion(db, {
		actor: author,
		specificationId,
		changeReason: 'Another change',
		now: new Date(),
	})
	expect(again).toMatchObject({
		ok: false,
		error: { status: 409, message: expect.stringContaining('Version 2 is still draft') },
	})
})

test("[VER-002] a locked version's content cannot be changed by direct SQL; its lifecycle may still move forward", async () => {
	const author = await makeActor(db, 'author')
	const { versionId } = await makeDraft(author)
	await edit(author, versionId, (content) => ({ ...content, scope: 'Approved scope' }))
	await db.execute(
		sql`update spec_versions set state = 'effective', effective_at = now(), locked_at = now() where id = ${versionId}`,
	)
	const contentChange = await databaseRefusal(() =>
		db.execute(
			sql`update spec_versions set content = jsonb_set(content, '{scope}', '"Quietly changed"') where id = ${versionId}`,
		),
	)
	expect(contentChange).toContain(
		`specification version ${versionId} is locked: its content cannot change (UPDATE refused)`,
	)
	const backToDraft = await databaseRefusal(() =>
		db.execute(sql`update spec_versions set state = 'draft' where id = ${versionId}`),
	)
	expect(backToDraft).toContain('effective → draft is not a forward step (UPDATE refused)')
	const remove = await databaseRefusal(() => db.execute(sql`delete from spec_versions where id = ${versionId}`))
	expect(remove).toContain(`specification version ${versionId} is locked: DELETE refused`)
	await db.execute(sql`update spec_versions set state = 'superseded', superseded_at = now() where id = ${versionId}`)
	const after = await versionRow(versionId)
	expect(after).toMatchObject({ state: 'superseded', content: { scope: 'Approved scope' } })
	expect(after.supersededAt).not.toBeNull()
})

test('[VER-003] evidence cannot be inserted for a locked version (database trigger); the service refuses non-drafts too', async () => {
	const author = await makeActor(db, 'author')
	const materialId = await makeMaterial(db, author)
	const reference = await storeSharedSpectrum(db, author, PARA, { purpose: 'reference', materialId })
	const { versionId } = await makeDraft(author, materialId)
	await edit(author, versionId, (content) => ({ ...content, referenceSpectrumId: reference.id }))
	await db.execute(
		sql`update spec_versions set state = 'effective', effective_at = now(), locked_at = now() where id = ${versionId}`,
	)
	const insert = await databaseRefusal(() =>
		db.insert(evidence).values({
			versionId,
			kind: 'comparison',
			title: 'late',
			result: {},
			algorithmVersion: ENGINE_VERSION,
			params: {},
			inputChecksums: {},
			createdBy: author.id,
		}),
	)
	expect(insert).toContain(`evidence of locked version ${versionId} cannot change (INSERT refused)`)
	const viaService = await recordComparison(db, {
		actor: author,
		versionId,
		sampleSpectrumId: reference.id,
		now: new Date(),
	})
	expect(viaService).toMatchObject({
		ok: false,
		error: { status: 409, message: 'Evidence is added while the version is a draft.' },
	})
	expect(await db.select({ id: evidence.id }).from(evidence)).toHaveLength(0)
})
