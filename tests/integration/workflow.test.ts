import { asc, between, count, eq, sql } from 'drizzle-orm'
import { TransactionRollbackError } from 'drizzle-orm/errors'
import { expect, test } from 'vitest'
import { reauthenticate } from '#app/.server/auth.ts'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { mailOutbox } from '#app/.server/db/schema/outbox.ts'
import { redlines, signatures, specVersions } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import {
	acceptRedlineSuggestion,
	addRedline,
	replyToRedline,
	setRedlineStatus,
} from '#app/.server/services/redlines.ts'
import {
	applyDueEffectiveDates,
	type StepInput,
	takeWorkflowStep,
	versionContentHash,
} from '#app/.server/services/spec-workflow.ts'
import { parseContent, saveDraft, startNextVersion } from '#app/.server/services/specifications.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { bandAnchor } from '#shared/specs/redline-anchors.ts'
import type { WorkflowEvent } from '#shared/workflow/spec-version-machine.ts'
import {
	auditActionsFor,
	makeActor,
	makeSignedVersion,
	makeSubmittableDraft,
	RING_STRETCH_BAND,
	takeStep,
	TEST_PASSWORD,
} from '#tests/support/factories.ts'

const DAY = 24 * 60 * 60 * 1000
const REVIEWED = { type: 'sign', meaning: 'reviewed', reauthenticated: true } as const
const approvedFrom = (effectiveFrom: Date) =>
	({ type: 'sign', meaning: 'approved', reauthenticated: true, effectiveFrom }) as const
const REJECTION = 'The band tolerance is not justified by replicate measurements.'

/** Instants `seconds` after the start of a test, so that every step has its own time. */
function clock() {
	const start = Date.now()
	return (seconds: number) => new Date(start + seconds * 1000)
}

async function versionRow(versionId: string) {
	const [row] = await db.select().from(specVersions).where(eq(specVersions.id, versionId))
	if (!row) throw new Error(`no version ${versionId}`)
	return row
}

async function signaturesOf(versionId: string) {
	return db
		.select()
		.from(signatures)
		.where(eq(signatures.versionId, versionId))
		.orderBy(asc(signatures.signedAt), asc(signatures.meaning))
}

/** The mail queued about a version, oldest first, with sorted recipients. */
async function mailAbout(versionId: string) {
	const rows = await db
		.select()
		.from(mailOutbox)
		.where(eq(mailOutbox.entityId, versionId))
		.orderBy(asc(mailOutbox.createdAt), asc(mailOutbox.kind))
	return rows.map((row) => ({ kind: row.kind, to: [...row.to].sort(), createdAt: row.createdAt, text: row.text }))
}

const emails = (...actors: Array<Actor>) => actors.map((actor) => actor.email).sort()

/** Everything a workflow step could touch, across the whole database. */
async function footprint() {
	const [audit] = await db.select({ rows: count() }).from(auditEvents)
	const [mail] = await db.select({ rows: count() }).from(mailOutbox)
	return {
		versions: await db.select().from(specVersions).orderBy(specVersions.id),
		signatures: await db.select().from(signatures).orderBy(signatures.id),
		spectra: await db.select({ id: spectra.id, lockedAt: spectra.lockedAt }).from(spectra).orderBy(spectra.id),
		redlines: await db.select().from(redlines).orderBy(redlines.id),
		auditEvents: audit!.rows,
		mail: mail!.rows,
	}
}

/** What the signing dialog does: the password is checked again, and only then is the step taken. */
async function signWithPassword(actor: Actor, password: string, versionId: string, event: WorkflowEvent, now: Date) {
	const reauthenticated = await reauthenticate(actor.id, password)
	if (!reauthenticated.ok) return reauthenticated
	return takeWorkflowStep(db, { actor, versionId, event, now })
}

async function failedSignIns(userId: string) {
	const [row] = await db
		.select({ failedSignIns: users.failedSignIns, lockedUntil: users.lockedUntil })
		.from(users)
		.where(eq(users.id, userId))
	return row!
}

test('[WF-013] author submits, reviewer and approver sign with their passwords: effective at once, two signature manifestations over the content hash, spectrum locked — 21 CFR 11.50(a), 11.70, 11.200(a) — FACTS.md §3.1', async () => {
	const at = clock()
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	await db.update(users).set({ timeZone: 'Europe/Paris' }).where(eq(users.id, approver.id))
	const { versionId, referenceSpectrumId } = await makeSubmittableDraft(db, author, { now: at(0) })

	expect(await takeWorkflowStep(db, { actor: author, versionId, event: { type: 'submit' }, now: at(1) })).toEqual({
		ok: true,
		value: { state: 'in_review' },
	})
	expect(await signWithPassword(reviewer, TEST_PASSWORD, versionId, REVIEWED, at(2))).toEqual({
		ok: true,
		value: { state: 'in_review' },
	})
	expect(await signWithPassword(approver, TEST_PASSWORD, versionId, approvedFrom(at(3)), at(3))).toEqual({
		ok: true,
		value: { state: 'effective' },
	})

	const hashed = await versionContentHash(db, versionId)
	expect(hashed?.hash).toMatch(/^[0-9a-f]{64}$/)
	expect(await versionRow(versionId)).toMatchObject({
		state: 'effective',
		submittedAt: at(1),
		effectiveFrom: at(3),
		effectiveAt: at(3),
		lockedAt: at(3),
		contentSha256: hashed!.hash,
	})
	const signed = await signaturesOf(versionId)
	expect(signed).toMatchObject([
		{
			signerId: reviewer.id,
			printedName: reviewer.name,
			meaning: 'reviewed',
			signedAt: at(2),
			signerTimeZone: 'UTC',
			contentSha256: hashed!.hash,
			voidedAt: null,
		},
		{
			signerId: approver.id,
			printedName: approver.name,
			meaning: 'approved',
			signedAt: at(3),
			signerTimeZone: 'Europe/Paris',
			contentSha256: hashed!.hash,
			voidedAt: null,
		},
	])
	for (const signature of signed) {
		expect(signature.statement).toContain(signature.printedName)
		expect(signature.statement).toContain(hashed!.hash)
		expect(signature.authentication).toBe('password re-entered at signing')
	}
	const [reference] = await db
		.select({ lockedAt: spectra.lockedAt })
		.from(spectra)
		.where(eq(spectra.id, referenceSpectrumId))
	expect(reference?.lockedAt).toEqual(at(3))
	expect(await auditActionsFor(db, versionId)).toEqual([
		'spec-version.saved',
		'spec-version.submit',
		'spec-version.sign-reviewed',
		'spec-version.sign-approved',
		'spec-version.make-effective',
	])
})

test('[WF-007] a second version through the same path supersedes the first in the same transaction — 21 CFR 11.10(f) — FACTS.md §3.1', async () => {
	const at = clock()
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	const first = await makeSignedVersion(db, { author, reviewer, approver }, { now: at(0) })
	expect(first.state).toBe('effective')
	const next = await startNextVersion(db, {
		actor: author,
		specificationId: first.specificationId,
		changeReason: 'Tighter tolerance after the 2026 method review.',
		now: at(1),
	})
	if (!next.ok) throw next.error
	await takeStep(db, author, next.value.versionId, { type: 'submit' }, at(2))
	await takeStep(db, reviewer, next.value.versionId, REVIEWED, at(3))
	expect(await takeStep(db, approver, next.value.versionId, approvedFrom(at(4)), at(4))).toBe('effective')

	expect(await versionRow(first.versionId)).toMatchObject({ state: 'superseded', supersededAt: at(4) })
	expect(await versionRow(next.value.versionId)).toMatchObject({
		state: 'effective',
		effectiveAt: at(4),
		versionNumber: 2,
	})
	const effective = await db
		.select({ id: specVersions.id })
		.from(specVersions)
		.where(eq(specVersions.state, 'effective'))
	expect(effective).toEqual([{ id: next.value.versionId }])
	// One transaction: the predecessor's supersede event sits between the approval and the new version's
	// make-effective, with no other event in between.
	const trail = await db
		.select()
		.from(auditEvents)
		.where(eq(auditEvents.occurredAt, at(4)))
		.orderBy(auditEvents.id)
	expect(trail.map((event) => [event.action, event.entityId])).toEqual([
		['spec-version.sign-approved', next.value.versionId],
		['spec-version.supersede', first.versionId],
		['spec-version.make-effective', next.value.versionId],
	])
	const adjacent = await db
		.select({ id: auditEvents.id })
		.from(auditEvents)
		.where(between(auditEvents.id, trail[0]!.id, trail[2]!.id))
	expect(adjacent).toHaveLength(3)
})

test('[WF-007] when superseding the predecessor fails, the approval of the new version is undone with it', async () => {
	const at = clock()
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	const first = await makeSignedVersion(db, { author, reviewer, approver }, { now: at(0) })
	const next = await startNextVersion(db, {
		actor: author,
		specificationId: first.specificationId,
		changeReason: 'Second band added after the review.',
		now: at(1),
	})
	if (!next.ok) throw next.error
	await takeStep(db, author, next.value.versionId, { type: 'submit' }, at(2))
	await takeStep(db, reviewer, next.value.versionId, REVIEWED, at(3))
	const before = await footprint()
	// A fault injected for this test only: the database refuses to mark any version superseded.
	await db.execute(sql`create function test_refuse_supersede() returns trigger language plpgsql as $$
		begin if new.state = 'superseded' then raise exception 'test fault: superseding refused'; end if; return new; end $$`)
	await db.execute(
		sql`create trigger test_refuse_supersede before update on spec_versions for each row execute function test_refuse_supersede()`,
	)
	try {
		await expect(
			takeWorkflowStep(db, {
				actor: approver,
				versionId: next.value.versionId,
				event: approvedFrom(at(4)),
				now: at(4),
			}),
		).rejects.toThrow()
	} finally {
		await db.execute(sql`drop trigger test_refuse_supersede on spec_versions`)
		await db.execute(sql`drop function test_refuse_supersede()`)
	}
	expect(await footprint()).toEqual(before)
	expect(await versionRow(first.versionId)).toMatchObject({ state: 'effective' })
	expect(await versionRow(next.value.versionId)).toMatchObject({ state: 'in_review', lockedAt: null })
})

test('[WF-007] an approval with a later effective date stays approved (and locked) until applyDueEffectiveDates reaches that date', async () => {
	const at = clock()
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	const effectiveFrom = new Date(at(0).getTime() + 2 * DAY)
	const version = await makeSignedVersion(db, { author, reviewer, approver }, { effectiveFrom, now: at(0) })
	expect(version.state).toBe('approved')
	expect(await versionRow(version.versionId)).toMatchObject({
		state: 'approved',
		effectiveFrom,
		effectiveAt: null,
		lockedAt: at(0),
	})
	const [reference] = await db
		.select({ lockedAt: spectra.lockedAt })
		.from(spectra)
		.where(eq(spectra.id, version.referenceSpectrumId))
	expect(reference?.lockedAt).toEqual(at(0))

	expect(await applyDueEffectiveDates(db, new Date(effectiveFrom.getTime() - 1000))).toBe(0)
	expect(await versionRow(version.versionId)).toMatchObject({ state: 'approved', effectiveAt: null })
	const later = new Date(effectiveFrom.getTime() + 60_000)
	expect(await applyDueEffectiveDates(db, later)).toBe(1)
	expect(await versionRow(version.versionId)).toMatchObject({ state: 'effective', effectiveAt: later })
	expect(await applyDueEffectiveDates(db, later)).toBe(0)
	const [event] = await db.select().from(auditEvents).where(eq(auditEvents.action, 'spec-version.make-effective'))
	expect(event).toMatchObject({ entityId: version.versionId, actorId: null, actorLabel: 'system', occurredAt: later })
	expect((await mailAbout(version.versionId)).filter((mail) => mail.kind === 'effective')).toMatchObject([
		{ createdAt: later, to: emails(author, reviewer, approver) },
	])
})

// The refusal matrix. Each person holds one role; "author" is the version's own author, "reviewer" and "approver"
// are the people who signed the version where it has signatures.
const PEOPLE = ['author', 'reviewer', 'approver', 'inspector', 'admin'] as const
type Person = (typeof PEOPLE)[number]
const STEPS = [
	'submit',
	'withdraw',
	'reject',
	'sign-reviewed',
	'sign-approved',
	'retire',
	'make-effective',
	'supersede',
] as const
type Step = (typeof STEPS)[number]
const STATES = [
	'draft',
	'in review',
	'in review, signed as reviewed',
	'approved',
	'effective',
	'superseded',
	'retired',
] as const
type MatrixState = (typeof STATES)[number]

/**
 * Who may take which step in each state (21 CFR 11.10(f), (g) — FACTS.md §3.1; PRODUCT.md §2). Every other
 * attempt is refused.
 */
const MAY: Record<MatrixState, Partial<Record<Step, ReadonlyArray<Person>>>> = {
	draft: { submit: ['author'] },
	'in review': { withdraw: ['author'], reject: ['reviewer', 'approver'], 'sign-reviewed': ['reviewer'] },
	'in review, signed as reviewed': {
		withdraw: ['author'],
		reject: ['reviewer', 'approver'],
		'sign-approved': ['approver'],
	},
	approved: { retire: ['approver'] },
	effective: { retire: ['approver'] },
	superseded: {},
	retired: {},
}

function eventFor(step: Step, now: Date): WorkflowEvent {
	switch (step) {
		case 'submit':
		case 'make-effective':
		case 'supersede':
			return { type: step }
		case 'withdraw':
			return { type: 'withdraw', reason: 'Withdrawn to add a second band.' }
		case 'reject':
			return { type: 'reject', reason: REJECTION }
		case 'retire':
			return { type: 'retire', reason: 'Replaced by the pharmacopoeial identity test.' }
		case 'sign-reviewed':
			return REVIEWED
		case 'sign-approved':
			return approvedFrom(new Date(now.getTime() + DAY))
	}
}

async function versionIn(state: MatrixState, cast: Record<Person, Actor>): Promise<string> {
	const { author, reviewer, approver } = cast
	switch (state) {
		case 'draft':
			return (await makeSubmittableDraft(db, author)).versionId
		case 'in review':
		case 'in review, signed as reviewed': {
			const { versionId } = await makeSubmittableDraft(db, author)
			await takeStep(db, author, versionId, { type: 'submit' })
			if (state === 'in review, signed as reviewed') await takeStep(db, reviewer, versionId, REVIEWED)
			return versionId
		}
		case 'approved':
			return (await makeSignedVersion(db, cast, { effectiveFrom: new Date(Date.now() + DAY) })).versionId
		case 'effective':
			return (await makeSignedVersion(db, cast)).versionId
		case 'superseded': {
			const first = await makeSignedVersion(db, cast)
			const next = await startNextVersion(db, {
				actor: author,
				specificationId: first.specificationId,
				changeReason: 'Tighter tolerance after review.',
				now: new Date(),
			})
			if (!next.ok) throw next.error
			await takeStep(db, author, next.value.versionId, { type: 'submit' })
			await takeStep(db, reviewer, next.value.versionId, REVIEWED)
			await takeStep(db, approver, next.value.versionId, approvedFrom(new Date()))
			return first.versionId
		}
		case 'retired': {
			const { versionId } = await makeSignedVersion(db, cast, { effectiveFrom: new Date(Date.now() + DAY) })
			await takeStep(db, approver, versionId, eventFor('retire', new Date()))
			return versionId
		}
	}
}

/** Takes a step inside a transaction that is then rolled back: whether it would be allowed, without keeping it. */
async function wouldSucceed(input: StepInput): Promise<boolean> {
	let allowed = false
	try {
		await db.transaction(async (tx) => {
			allowed = (await takeWorkflowStep(tx, input)).ok
			tx.rollback()
		})
	} catch (error) {
		if (!(error instanceof TransactionRollbackError)) throw error
	}
	return allowed
}

test.each(STATES)(
	'[WF-002] %s: each step is taken only by the role it belongs to, every other attempt is refused and changes nothing — 21 CFR 11.10(f), (g) — FACTS.md §3.1; PRODUCT.md §2',
	async (state) => {
		const cast: Record<Person, Actor> = {
			author: await makeActor(db, 'author'),
			reviewer: await makeActor(db, 'reviewer'),
			approver: await makeActor(db, 'approver'),
			inspector: await makeActor(db, 'inspector'),
			admin: await makeActor(db, 'admin'),
		}
		const versionId = await versionIn(state, cast)
		const expected: Record<string, 'allowed' | 'refused'> = {}
		const observed: Record<string, 'allowed' | 'refused'> = {}
		for (const step of STEPS) {
			for (const person of PEOPLE) {
				const cell = `${step} by ${person}`
				const may = MAY[state][step]?.includes(person) ?? false
				expected[cell] = may ? 'allowed' : 'refused'
				const now = new Date()
				const input: StepInput = { actor: cast[person], versionId, event: eventFor(step, now), now }
				if (may) {
					observed[cell] = (await wouldSucceed(input)) ? 'allowed' : 'refused'
					continue
				}
				const before = await footprint()
				const outcome = await takeWorkflowStep(db, input)
				observed[cell] = outcome.ok ? 'allowed' : 'refused'
				expect.soft(await footprint(), `${cell} in ${state} changed something`).toEqual(before)
			}
		}
		expect(observed).toEqual(expected)
		expect(await versionRow(versionId)).toMatchObject({ state: state.startsWith('in review') ? 'in_review' : state })
	},
)

test('[SIG-001] an author who also holds the reviewer role cannot review their own version — PRODUCT.md §2 segregation of duties', async () => {
	const author = await makeActor(db, 'author', 'reviewer')
	const { versionId } = await makeSubmittableDraft(db, author)
	await takeStep(db, author, versionId, { type: 'submit' })
	const before = await footprint()
	expect(await signWithPassword(author, TEST_PASSWORD, versionId, REVIEWED, new Date())).toMatchObject({
		ok: false,
		error: { status: 403, code: 'segregation' },
	})
	expect(await footprint()).toEqual(before)
})

test('[SIG-002] an author who also holds the approver role cannot approve their own version — PRODUCT.md §2 segregation of duties', async () => {
	const author = await makeActor(db, 'author', 'approver')
	const reviewer = await makeActor(db, 'reviewer')
	const { versionId } = await makeSubmittableDraft(db, author)
	await takeStep(db, author, versionId, { type: 'submit' })
	await takeStep(db, reviewer, versionId, REVIEWED)
	const before = await footprint()
	expect(await signWithPassword(author, TEST_PASSWORD, versionId, approvedFrom(new Date()), new Date())).toMatchObject({
		ok: false,
		error: { status: 403, code: 'segregation' },
	})
	expect(await footprint()).toEqual(before)
})

test('[SIG-003] the reviewer of a version cannot also approve it; a different approver can — PRODUCT.md §2 segregation of duties', async () => {
	const author = await makeActor(db, 'author')
	const both = await makeActor(db, 'reviewer', 'approver')
	const approver = await makeActor(db, 'approver')
	const { versionId } = await makeSubmittableDraft(db, author)
	await takeStep(db, author, versionId, { type: 'submit' })
	expect(await signWithPassword(both, TEST_PASSWORD, versionId, REVIEWED, new Date())).toEqual({
		ok: true,
		value: { state: 'in_review' },
	})
	const before = await footprint()
	expect(await signWithPassword(both, TEST_PASSWORD, versionId, approvedFrom(new Date()), new Date())).toMatchObject({
		ok: false,
		error: { status: 403, code: 'segregation' },
	})
	expect(await footprint()).toEqual(before)
	expect(await signWithPassword(approver, TEST_PASSWORD, versionId, approvedFrom(new Date()), new Date())).toEqual({
		ok: true,
		value: { state: 'effective' },
	})
	expect((await signaturesOf(versionId)).map((row) => [row.meaning, row.signerId])).toEqual([
		['reviewed', both.id],
		['approved', approver.id],
	])
})

test('[WF-020] someone who saved the draft (a co-editor) can neither redline, review nor approve it — PRODUCT.md §2 segregation of duties', async () => {
	const author = await makeActor(db, 'author')
	const coEditor = await makeActor(db, 'author', 'reviewer', 'approver')
	const reviewer = await makeActor(db, 'reviewer')
	const { versionId } = await makeSubmittableDraft(db, author)
	const draft = await versionRow(versionId)
	const content = parseContent(draft.content)
	const saved = await saveDraft(db, {
		actor: coEditor,
		versionId,
		revision: draft.revision,
		content: { ...content, notes: 'Dry the sample before measuring.' },
		changeReason: null,
		now: new Date(),
	})
	expect(saved.ok).toBe(true)
	expect((await versionRow(versionId)).editorIds).toEqual([author.id, coEditor.id])
	await takeStep(db, author, versionId, { type: 'submit' })

	let before = await footprint()
	expect(
		await addRedline(db, {
			actor: coEditor,
			versionId,
			anchor: 'scope',
			body: 'Looks fine to me.',
			suggestedText: null,
			now: new Date(),
		}),
	).toMatchObject({ ok: false, error: { status: 403 } })
	expect(await signWithPassword(coEditor, TEST_PASSWORD, versionId, REVIEWED, new Date())).toMatchObject({
		ok: false,
		error: { status: 403, code: 'segregation' },
	})
	expect(await footprint()).toEqual(before)
	await takeStep(db, reviewer, versionId, REVIEWED)
	before = await footprint()
	expect(
		await signWithPassword(coEditor, TEST_PASSWORD, versionId, approvedFrom(new Date()), new Date()),
	).toMatchObject({
		ok: false,
		error: { status: 403, code: 'segregation' },
	})
	expect(await footprint()).toEqual(before)
})

test('[SIG-006] an open redline blocks signing until it is resolved; replies do not count as open — 21 CFR 11.10(f) — FACTS.md §3.1', async () => {
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	const { versionId } = await makeSubmittableDraft(db, author)
	await takeStep(db, author, versionId, { type: 'submit' })
	const added = await addRedline(db, {
		actor: reviewer,
		versionId,
		anchor: bandAnchor(RING_STRETCH_BAND.id),
		body: 'Which tolerance applies here?',
		suggestedText: null,
		now: new Date(),
	})
	if (!added.ok) throw added.error
	expect(
		await replyToRedline(db, {
			actor: author,
			redlineId: added.value.redlineId,
			body: 'The default 0.5 % of the position.',
			now: new Date(),
		}),
	).toMatchObject({ ok: true })

	let before = await footprint()
	expect(await signWithPassword(reviewer, TEST_PASSWORD, versionId, REVIEWED, new Date())).toMatchObject({
		ok: false,
		error: { status: 409, code: 'open-redlines' },
	})
	expect(await footprint()).toEqual(before)
	expect(
		await setRedlineStatus(db, {
			actor: reviewer,
			redlineId: added.value.redlineId,
			status: 'resolved',
			resolution: 'Answered',
			now: new Date(),
		}),
	).toEqual({ ok: true, value: true })
	expect(await signWithPassword(reviewer, TEST_PASSWORD, versionId, REVIEWED, new Date())).toEqual({
		ok: true,
		value: { state: 'in_review' },
	})

	// The approver's own redline blocks the approval the same way.
	const second = await addRedline(db, {
		actor: approver,
		versionId,
		anchor: 'notes',
		body: 'Add the storage conditions.',
		suggestedText: null,
		now: new Date(),
	})
	if (!second.ok) throw second.error
	before = await footprint()
	expect(
		await signWithPassword(approver, TEST_PASSWORD, versionId, approvedFrom(new Date()), new Date()),
	).toMatchObject({ ok: false, error: { status: 409, code: 'open-redlines' } })
	expect(await footprint()).toEqual(before)
	await setRedlineStatus(db, {
		actor: approver,
		redlineId: second.value.redlineId,
		status: 'resolved',
		resolution: null,
		now: new Date(),
	})
	expect(await signWithPassword(approver, TEST_PASSWORD, versionId, approvedFrom(new Date()), new Date())).toEqual({
		ok: true,
		value: { state: 'effective' },
	})
})

test('[RED-001] after a rejection the author accepts a redline suggestion: the field changes and the redline is resolved', async () => {
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const { versionId } = await makeSubmittableDraft(db, author)
	await takeStep(db, author, versionId, { type: 'submit' })
	const scopeText = 'Identity of incoming 4-chloroaniline from qualified suppliers only.'
	const onScope = await addRedline(db, {
		actor: reviewer,
		versionId,
		anchor: 'scope',
		body: 'Restrict to qualified suppliers.',
		suggestedText: scopeText,
		now: new Date(),
	})
	const onBand = await addRedline(db, {
		actor: reviewer,
		versionId,
		anchor: bandAnchor(RING_STRETCH_BAND.id),
		body: 'Name the ring mode.',
		suggestedText: 'aromatic ring C=C stretch (ν 19a)',
		now: new Date(),
	})
	if (!onScope.ok || !onBand.ok) throw new Error('redlines not added')

	// While the version is in review its content is frozen: the suggestion waits for the draft.
	const frozen = await footprint()
	expect(
		await acceptRedlineSuggestion(db, { actor: author, redlineId: onScope.value.redlineId, now: new Date() }),
	).toMatchObject({ ok: false, error: { status: 409 } })
	expect(await footprint()).toEqual(frozen)

	await takeStep(db, reviewer, versionId, { type: 'reject', reason: REJECTION })
	const revision = (await versionRow(versionId)).revision
	expect(
		await acceptRedlineSuggestion(db, { actor: author, redlineId: onScope.value.redlineId, now: new Date() }),
	).toEqual({ ok: true, value: { revision: revision + 1 } })
	expect(
		await acceptRedlineSuggestion(db, { actor: author, redlineId: onBand.value.redlineId, now: new Date() }),
	).toEqual({ ok: true, value: { revision: revision + 2 } })
	const content = parseContent((await versionRow(versionId)).content)
	expect(content.scope).toBe(scopeText)
	expect(content.bands).toEqual([{ ...RING_STRETCH_BAND, assignment: 'aromatic ring C=C stretch (ν 19a)' }])
	const threads = await db.select().from(redlines).where(eq(redlines.versionId, versionId)).orderBy(redlines.createdAt)
	expect(
		threads.map((row) => ({ status: row.status, resolvedBy: row.resolvedBy, resolution: row.resolution })),
	).toEqual([
		{ status: 'resolved', resolvedBy: author.id, resolution: 'Suggested text accepted' },
		{ status: 'resolved', resolvedBy: author.id, resolution: 'Suggested text accepted' },
	])
	expect(
		await acceptRedlineSuggestion(db, { actor: author, redlineId: onScope.value.redlineId, now: new Date() }),
	).toMatchObject({ ok: false, error: { status: 409 } })
	expect((await auditActionsFor(db, versionId)).slice(-4)).toEqual([
		'spec-version.saved',
		'redline.resolved',
		'spec-version.saved',
		'redline.resolved',
	])
	await takeStep(db, author, versionId, { type: 'submit' })
	expect(await signWithPassword(reviewer, TEST_PASSWORD, versionId, REVIEWED, new Date())).toEqual({
		ok: true,
		value: { state: 'in_review' },
	})
})

test('[WF-004] a rejection needs a reason; it voids the signatures so far, which stay on record, and mails the reason — 21 CFR 11.10(e) — FACTS.md §3.1', async () => {
	const at = clock()
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	const { versionId } = await makeSubmittableDraft(db, author, { now: at(0) })
	await takeStep(db, author, versionId, { type: 'submit' }, at(1))
	await takeStep(db, reviewer, versionId, REVIEWED, at(2))

	const before = await footprint()
	for (const reason of ['', '   ', 'too short']) {
		expect(
			await takeWorkflowStep(db, { actor: approver, versionId, event: { type: 'reject', reason }, now: at(3) }),
		).toMatchObject({
			ok: false,
			error: { status: 422, code: 'reason' },
		})
	}
	expect(await footprint()).toEqual(before)

	expect(
		await takeWorkflowStep(db, {
			actor: approver,
			versionId,
			event: { type: 'reject', reason: REJECTION },
			now: at(4),
		}),
	).toEqual({ ok: true, value: { state: 'draft' } })
	expect(await versionRow(versionId)).toMatchObject({ state: 'draft', lastRejectionReason: REJECTION, lockedAt: null })
	expect(await signaturesOf(versionId)).toMatchObject([{ signerId: reviewer.id, meaning: 'reviewed', voidedAt: at(4) }])
	const [event] = await db.select().from(auditEvents).where(eq(auditEvents.action, 'spec-version.reject'))
	expect(event).toMatchObject({
		entityId: versionId,
		actorId: approver.id,
		reason: REJECTION,
		before: { state: 'in_review' },
		after: { state: 'draft' },
	})
	const rejected = (await mailAbout(versionId)).filter((mail) => mail.kind === 'rejected')
	expect(rejected).toMatchObject([{ to: emails(author, reviewer), createdAt: at(4) }])
	expect(rejected[0]!.text).toContain(REJECTION)

	// The voided signature no longer counts: after resubmission the version needs, and gets, a fresh review.
	await takeStep(db, author, versionId, { type: 'submit' }, at(5))
	expect(
		await takeWorkflowStep(db, { actor: approver, versionId, event: approvedFrom(at(6)), now: at(6) }),
	).toMatchObject({ ok: false, error: { code: 'sequence' } })
	await takeStep(db, reviewer, versionId, REVIEWED, at(7))
	expect((await signaturesOf(versionId)).map((row) => row.voidedAt)).toEqual([at(4), null])
})

test('[SIG-012] a wrong password at signing records no signature and counts as a failed sign-in — 21 CFR 11.200(a), 11.300(d) — FACTS.md §3.1', async () => {
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const { versionId } = await makeSubmittableDraft(db, author)
	await takeStep(db, author, versionId, { type: 'submit' })
	const version = await versionRow(versionId)
	const [mail] = await db.select({ rows: count() }).from(mailOutbox)

	expect(await signWithPassword(reviewer, 'not-my-password', versionId, REVIEWED, new Date())).toMatchObject({
		ok: false,
		error: { status: 401 },
	})
	expect(await signaturesOf(versionId)).toEqual([])
	expect(await versionRow(versionId)).toEqual(version)
	expect(await failedSignIns(reviewer.id)).toEqual({ failedSignIns: 1, lockedUntil: null })
	const [failure] = await db.select().from(auditEvents).where(eq(auditEvents.action, 'user.sign-in-failed'))
	expect(failure).toMatchObject({ entityId: reviewer.id, after: { failedSignIns: 1, during: 'signature' } })
	expect(await db.select({ rows: count() }).from(mailOutbox)).toEqual([mail])
	// The workflow itself refuses a signature that was not re-authenticated, whatever the caller.
	expect(
		await takeWorkflowStep(db, {
			actor: reviewer,
			versionId,
			event: { ...REVIEWED, reauthenticated: false },
			now: new Date(),
		}),
	).toMatchObject({
		ok: false,
		error: { status: 401, code: 'reauthentication' },
	})
	expect(await signaturesOf(versionId)).toEqual([])
	// The right password then signs and starts the count afresh.
	expect(await signWithPassword(reviewer, TEST_PASSWORD, versionId, REVIEWED, new Date())).toEqual({
		ok: true,
		value: { state: 'in_review' },
	})
	expect(await failedSignIns(reviewer.id)).toEqual({ failedSignIns: 0, lockedUntil: null })
})

test('[SIG-013] five wrong passwords at signing lock the account; then even the right one signs nothing — 21 CFR 11.300(d) — FACTS.md §3.1; PRODUCT.md §7', async () => {
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const { versionId } = await makeSubmittableDraft(db, author)
	await takeStep(db, author, versionId, { type: 'submit' })
	for (let attempt = 1; attempt <= 4; attempt++) {
		expect(await signWithPassword(reviewer, `wrong-${attempt}`, versionId, REVIEWED, new Date())).toMatchObject({
			ok: false,
			error: { status: 401 },
		})
	}
	expect(await failedSignIns(reviewer.id)).toEqual({ failedSignIns: 4, lockedUntil: null })
	const fifth = Date.now()
	expect(await signWithPassword(reviewer, 'wrong-5', versionId, REVIEWED, new Date())).toMatchObject({
		ok: false,
		error: { status: 401 },
	})
	const locked = await failedSignIns(reviewer.id)
	expect(locked.failedSignIns).toBe(5)
	// LOCKOUT_MINUTES defaults to 30 (app/.server/env.ts).
	expect(locked.lockedUntil?.getTime()).toBeGreaterThanOrEqual(fifth + 30 * 60_000 - 1000)
	expect(await auditActionsFor(db, reviewer.id)).toContain('user.locked')

	const refused = await signWithPassword(reviewer, TEST_PASSWORD, versionId, REVIEWED, new Date())
	expect(refused).toMatchObject({ ok: false, error: { status: 403 } })
	expect(refused.ok ? '' : refused.error.message).toContain('locked')
	expect(await signaturesOf(versionId)).toEqual([])
	expect(await versionRow(versionId)).toMatchObject({ state: 'in_review' })
})

test('[MAIL-010] each step queues its mail in its own transaction: review requested to reviewers, ready to sign to approvers, approved and effective to those involved', async () => {
	const at = clock()
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const otherReviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	const otherApprover = await makeActor(db, 'approver')
	await makeActor(db, 'inspector')
	const { versionId } = await makeSubmittableDraft(db, author, { now: at(0) })

	// A step rolled back after it ran leaves no mail behind.
	let attempted = false
	await db
		.transaction(async (tx) => {
			attempted = (await takeWorkflowStep(tx, { actor: author, versionId, event: { type: 'submit' }, now: at(1) })).ok
			tx.rollback()
		})
		.catch((error: unknown) => {
			if (!(error instanceof TransactionRollbackError)) throw error
		})
	expect(attempted).toBe(true)
	expect(await mailAbout(versionId)).toEqual([])

	await takeStep(db, author, versionId, { type: 'submit' }, at(2))
	// A refused step queues nothing.
	expect(
		await takeWorkflowStep(db, { actor: approver, versionId, event: approvedFrom(at(3)), now: at(3) }),
	).toMatchObject({ ok: false })
	await takeStep(db, reviewer, versionId, REVIEWED, at(4))
	await takeStep(db, approver, versionId, approvedFrom(at(5)), at(5))

	expect((await mailAbout(versionId)).map(({ kind, to, createdAt }) => ({ kind, to, createdAt }))).toEqual([
		{ kind: 'review-requested', to: emails(reviewer, otherReviewer), createdAt: at(2) },
		{ kind: 'ready-to-sign', to: emails(approver, otherApprover), createdAt: at(4) },
		{ kind: 'approved', to: emails(author, reviewer), createdAt: at(5) },
		{ kind: 'effective', to: emails(author, reviewer, approver), createdAt: at(5) },
	])
})
