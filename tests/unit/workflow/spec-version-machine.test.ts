import fc from 'fast-check'
import { expect, test } from 'vitest'

import { type Actor, type Role } from '#shared/authz/permissions.ts'
import {
	actionOf,
	availableActions,
	decideTransition,
	EFFECTIVE_FROM_GRACE_MS,
	type RecordedSignature,
	signatureManifestation,
	signatureStatement,
	STATE_LABELS,
	SYSTEM,
	VERSION_STATES,
	type VersionSnapshot,
	type VersionState,
	WORKFLOW_ACTIONS,
	type WorkflowAction,
	type WorkflowActor,
	type WorkflowEvent,
} from '#shared/workflow/spec-version-machine.ts'

// Sources used below (FACTS.md §3.1 and §3.2, and PRODUCT.md §2):
// - 21 CFR 11.10(f) operational checks enforce permitted sequencing — FACTS.md §3.1 [READ]
// - 21 CFR 11.10(g) authority checks: only authorised people sign — FACTS.md §3.1 [READ]
// - 21 CFR 11.50(a)(1)–(3) printed name, date and time, meaning — FACTS.md §3.1 [READ-2°]
// - 21 CFR 11.200(a)(1) every signing uses at least one identification component (the password) — FACTS.md §3.1 [READ]
// - EU GMP Annex 11 §9 a reason is documented for a change — FACTS.md §3.2 [READ-2°]
// - segregation of duties (author ≠ reviewer ≠ approver) — PRODUCT.md §2 (product rule, common practice, no published source)

const NOW = new Date('2026-03-02T10:00:00Z')
const HOUR = 60 * 60 * 1000

function person(id: string, ...roles: Array<Role>): Actor {
	return { id, name: `Name of ${id}`, email: `${id}@lab.test`, roles }
}

const AUTHOR = person('ada', 'author')
const REVIEWER = person('rui', 'reviewer')
const APPROVER = person('aya', 'approver')

function signature(user: Actor, meaning: RecordedSignature['meaning'], hoursAgo = 1): RecordedSignature {
	return { userId: user.id, meaning, signedAt: new Date(NOW.getTime() - hoursAgo * HOUR) }
}

/** A well-formed version in each state, with the signatures that state implies. */
function version(state: VersionState, overrides: Partial<VersionSnapshot> = {}): VersionSnapshot {
	const signed = state === 'approved' || state === 'effective' || state === 'superseded' || state === 'retired'
	return {
		state,
		authorId: AUTHOR.id,
		versionNumber: 2,
		changeReason: 'Tolerance of the carbonyl band widened after method transfer',
		signatures: signed ? [signature(REVIEWER, 'reviewed', 3), signature(APPROVER, 'approved', 2)] : [],
		openRedlines: 0,
		effectiveFrom: signed ? new Date(NOW.getTime() - HOUR) : null,
		hasReferenceSpectrum: true,
		bandCount: 4,
		...overrides,
	}
}

const REASON = 'Band table lacks the C–O stretch near 1100 cm⁻¹'

function eventFor(action: WorkflowAction): WorkflowEvent {
	switch (action) {
		case 'submit':
		case 'make-effective':
		case 'supersede':
			return { type: action }
		case 'withdraw':
			return { type: 'withdraw' }
		case 'reject':
		case 'retire':
			return { type: action, reason: REASON }
		case 'sign-reviewed':
			return { type: 'sign', meaning: 'reviewed', reauthenticated: true }
		case 'sign-approved':
			return { type: 'sign', meaning: 'approved', reauthenticated: true, effectiveFrom: new Date(NOW.getTime() + HOUR) }
	}
}

/** The actor whose role the step needs, so that only the state decides. */
function rightActorFor(action: WorkflowAction): WorkflowActor {
	switch (action) {
		case 'submit':
		case 'withdraw':
			return AUTHOR
		case 'sign-reviewed':
			return REVIEWER
		case 'reject':
		case 'sign-approved':
		case 'retire':
			return APPROVER
		case 'make-effective':
		case 'supersede':
			return SYSTEM
	}
}

/** In review, an approval needs a prior 'reviewed' signature; give it one so that only the state decides. */
function readyFor(action: WorkflowAction, state: VersionState): VersionSnapshot {
	if (action === 'sign-approved' && state === 'in_review')
		return version(state, { signatures: [signature(REVIEWER, 'reviewed')] })
	return version(state)
}

// Expected transitions, written out independently of the implementation's rule table.
const ALLOWED: Record<WorkflowAction, Partial<Record<VersionState, VersionState>>> = {
	submit: { draft: 'in_review' },
	withdraw: { in_review: 'draft' },
	reject: { in_review: 'draft' },
	'sign-reviewed': { in_review: 'in_review' },
	'sign-approved': { in_review: 'approved' },
	'make-effective': { approved: 'effective' },
	supersede: { effective: 'superseded' },
	retire: { approved: 'retired', effective: 'retired' },
}

const EVERY_STEP_IN_EVERY_STATE = WORKFLOW_ACTIONS.flatMap((action) =>
	VERSION_STATES.map((state) => [action, state, ALLOWED[action][state] ?? null] as const),
)

test.each(EVERY_STEP_IN_EVERY_STATE)('[WF-001] %s from %s → %s', (action, state, expected) => {
	// 21 CFR 11.10(f) permitted sequencing — FACTS.md §3.1 [READ]; states and steps — PRODUCT.md §3.
	const result = decideTransition(readyFor(action, state), eventFor(action), rightActorFor(action), NOW)
	if (expected === null) {
		expect(result.ok).toBe(false)
		if (result.ok) return
		expect(result.error.code).toBe('state')
		expect(result.error.status).toBe(409)
		expect(result.error.message).toContain(`the version is ${STATE_LABELS[state]}`)
	} else {
		expect(result).toMatchObject({ ok: true, value: { next: expected } })
	}
})

const HUMAN_ROLES: Array<Role> = ['author', 'reviewer', 'approver', 'analyst', 'inspector', 'admin']
type Who = Role | 'system'

// Who may take each step, by role (PRODUCT.md §2; 21 CFR 11.10(g) — FACTS.md §3.1 [READ]).
const MAY: Array<[WorkflowAction, VersionState, Array<Who>]> = [
	['submit', 'draft', ['author']],
	['withdraw', 'in_review', ['author']],
	['reject', 'in_review', ['reviewer', 'approver']],
	['sign-reviewed', 'in_review', ['reviewer']],
	['sign-approved', 'in_review', ['approver']],
	['make-effective', 'approved', ['system']],
	['supersede', 'effective', ['system']],
	['retire', 'approved', ['approver']],
	['retire', 'effective', ['approver']],
]

const ROLE_MATRIX = MAY.flatMap(([action, state, allowed]) =>
	[...HUMAN_ROLES, 'system' as const].map((who) => [action, state, who, allowed.includes(who)] as const),
)

test.each(ROLE_MATRIX)('[WF-002] %s from %s by %s: allowed = %s', (action, state, who, allowed) => {
	// Role × step matrix — PRODUCT.md §2; 21 CFR 11.10(g) authority checks — FACTS.md §3.1 [READ].
	// The author-role actor is the version's own author; every other actor is someone else.
	const actor: WorkflowActor = who === 'system' ? SYSTEM : who === 'author' ? AUTHOR : person(`other-${who}`, who)
	const result = decideTransition(readyFor(action, state), eventFor(action), actor, NOW)
	expect(result.ok).toBe(allowed)
	if (!result.ok) {
		expect(['role', 'system-only']).toContain(result.error.code)
		expect(result.error.status).toBe(403)
	}
})

test('[SIG-001] an author cannot review their own version, even holding the reviewer role', () => {
	// Segregation of duties — PRODUCT.md §2 (common practice, no published source); 21 CFR 11.10(g) — FACTS.md §3.1 [READ].
	const authorReviewer = person(AUTHOR.id, 'author', 'reviewer')
	const result = decideTransition(version('in_review'), eventFor('sign-reviewed'), authorReviewer, NOW)
	expect(result).toMatchObject({ ok: false, error: { code: 'segregation', status: 403 } })
	if (!result.ok) expect(result.error.message).toMatch(/authored this version/)
})

test('[SIG-002] an author cannot approve their own version, even holding the approver role', () => {
	// Segregation of duties — PRODUCT.md §2 (common practice, no published source).
	const authorApprover = person(AUTHOR.id, 'author', 'approver')
	const snapshot = version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] })
	expect(decideTransition(snapshot, eventFor('sign-approved'), authorApprover, NOW)).toMatchObject({
		ok: false,
		error: { code: 'segregation' },
	})
})

test('[SIG-003] the reviewer of a version cannot also approve it, even holding the approver role', () => {
	// Reviewer ≠ approver — PRODUCT.md §2 (common practice, no published source).
	const both = person('rui', 'reviewer', 'approver')
	const snapshot = version('in_review', { signatures: [signature(both, 'reviewed')] })
	const result = decideTransition(snapshot, eventFor('sign-approved'), both, NOW)
	expect(result).toMatchObject({ ok: false, error: { code: 'segregation' } })
	if (!result.ok) expect(result.error.message).toMatch(/signed this version as reviewed/)
	// A different person holding both roles may approve.
	expect(decideTransition(snapshot, eventFor('sign-approved'), person('zoe', 'reviewer', 'approver'), NOW).ok).toBe(
		true,
	)
})

test('[SIG-004] a version is signed as reviewed once; a second reviewer is refused', () => {
	// 21 CFR 11.10(f) sequencing — FACTS.md §3.1 [READ].
	const snapshot = version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] })
	for (const actor of [REVIEWER, person('ren', 'reviewer')]) {
		expect(decideTransition(snapshot, eventFor('sign-reviewed'), actor, NOW)).toMatchObject({
			ok: false,
			error: { code: 'step-done', status: 409 },
		})
	}
})

test('[SIG-005] approval before review is refused', () => {
	// 21 CFR 11.10(f): "cannot approve before review" — FACTS.md §3.1 [READ].
	const result = decideTransition(version('in_review'), eventFor('sign-approved'), APPROVER, NOW)
	expect(result).toMatchObject({ ok: false, error: { code: 'sequence', status: 409 } })
	if (!result.ok) expect(result.error.message).toMatch(/signed as reviewed before it can be approved/)
})

test('[SIG-006] open redlines block both signatures but not submitting or rejecting', () => {
	// Issue 5 item 2 ("a version with open redlines cannot be signed"); product rule, no published source.
	const open = version('in_review', { openRedlines: 2 })
	const review = decideTransition(open, eventFor('sign-reviewed'), REVIEWER, NOW)
	expect(review).toMatchObject({
		ok: false,
		error: { code: 'open-redlines', message: '2 open redlines must be resolved first.' },
	})
	const reviewed = { ...open, signatures: [signature(REVIEWER, 'reviewed')] }
	expect(decideTransition(reviewed, eventFor('sign-approved'), APPROVER, NOW)).toMatchObject({
		ok: false,
		error: { code: 'open-redlines' },
	})
	expect(decideTransition(open, eventFor('reject'), REVIEWER, NOW).ok).toBe(true)
	expect(decideTransition(version('draft', { openRedlines: 1 }), eventFor('submit'), AUTHOR, NOW).ok).toBe(true)
})

test('[SIG-007] a signature without fresh re-authentication is refused', () => {
	// 21 CFR 11.200(a)(1)(i)–(ii): each signing uses at least the password — FACTS.md §3.1 [READ].
	const review = decideTransition(
		version('in_review'),
		{ type: 'sign', meaning: 'reviewed', reauthenticated: false },
		REVIEWER,
		NOW,
	)
	expect(review).toMatchObject({ ok: false, error: { code: 'reauthentication', status: 401 } })
	const snapshot = version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] })
	const approve = decideTransition(
		snapshot,
		{ type: 'sign', meaning: 'approved', reauthenticated: false, effectiveFrom: NOW },
		APPROVER,
		NOW,
	)
	expect(approve).toMatchObject({ ok: false, error: { code: 'reauthentication' } })
})

test('[SIG-008] signing records a signature with its meaning and notifies the next people', () => {
	// 21 CFR 11.50(a)(3) meaning recorded — FACTS.md §3.1 [READ-2°].
	const review = decideTransition(version('in_review'), eventFor('sign-reviewed'), REVIEWER, NOW)
	expect(review).toEqual({
		ok: true,
		value: {
			next: 'in_review',
			effects: [
				{ kind: 'record-signature', meaning: 'reviewed' },
				{ kind: 'notify', template: 'ready-to-approve', to: [{ role: 'approver' }] },
			],
		},
	})
	const effectiveFrom = new Date('2026-04-01T00:00:00Z')
	const snapshot = version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] })
	const approve = decideTransition(
		snapshot,
		{ type: 'sign', meaning: 'approved', reauthenticated: true, effectiveFrom },
		APPROVER,
		NOW,
	)
	expect(approve).toEqual({
		ok: true,
		value: {
			next: 'approved',
			effects: [
				{ kind: 'record-signature', meaning: 'approved' },
				{ kind: 'schedule-effective', at: effectiveFrom },
				{ kind: 'notify', template: 'approved', to: [{ userId: AUTHOR.id }, { userId: REVIEWER.id }] },
			],
		},
	})
})

test('[WF-003] the effective date may not be back-dated; within the grace period it is clamped to now', () => {
	// No back-dating: common practice, no source. Grace period: our choice (EFFECTIVE_FROM_GRACE_MS).
	const snapshot = version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] })
	const approveAt = (effectiveFrom: Date) =>
		decideTransition(
			snapshot,
			{ type: 'sign', meaning: 'approved', reauthenticated: true, effectiveFrom },
			APPROVER,
			NOW,
		)
	expect(approveAt(new Date(NOW.getTime() - 24 * HOUR))).toMatchObject({ ok: false, error: { code: 'effective-date' } })
	expect(approveAt(new Date(NOW.getTime() - EFFECTIVE_FROM_GRACE_MS - 1))).toMatchObject({ ok: false })
	expect(approveAt(new Date(Number.NaN))).toMatchObject({ ok: false, error: { code: 'effective-date' } })
	const recent = approveAt(new Date(NOW.getTime() - 5 * 60 * 1000))
	expect(recent.ok && recent.value.effects).toContainEqual({ kind: 'schedule-effective', at: NOW })
})

test('[WF-004] rejection needs a reason of at least 10 characters and returns the version to draft', () => {
	// EU GMP Annex 11 §9 reason documented — FACTS.md §3.2 [READ-2°]; PRODUCT.md §3 "recorded reason".
	for (const reason of ['', '   ', 'too short', '   nine ch   ']) {
		expect(decideTransition(version('in_review'), { type: 'reject', reason }, REVIEWER, NOW)).toMatchObject({
			ok: false,
			error: { code: 'reason', status: 422 },
		})
	}
	const reviewed = version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] })
	const result = decideTransition(reviewed, { type: 'reject', reason: 'Scope omits the hydrate form' }, APPROVER, NOW)
	expect(result).toEqual({
		ok: true,
		value: {
			next: 'draft',
			effects: [
				{ kind: 'void-signatures' },
				{ kind: 'notify', template: 'rejected', to: [{ userId: AUTHOR.id }, { userId: REVIEWER.id }] },
			],
		},
	})
})

test('[WF-005] an approved version is locked: it cannot be rejected to draft, only retired by an approver', () => {
	// 21 CFR 11.10(c)/(e) records protected once approved — FACTS.md §3.1; the database lock enforces it too.
	const approved = version('approved', { effectiveFrom: new Date(NOW.getTime() + 24 * HOUR) })
	expect(decideTransition(approved, eventFor('reject'), person('ines', 'approver'), NOW)).toMatchObject({ ok: false })
	const retired = decideTransition(approved, eventFor('retire'), person('ines', 'approver'), NOW)
	expect(retired.ok && retired.value.next).toBe('retired')
	expect(decideTransition(approved, eventFor('retire'), person('rex', 'reviewer'), NOW)).toMatchObject({
		ok: false,
		error: { code: 'role' },
	})
})

test('[WF-006] after a rejection the resubmitted version needs fresh signatures', () => {
	// 21 CFR 11.70 signatures linked to the exact content — FACTS.md §3.1 [READ]; the service applies 'void-signatures'.
	let snapshot = version('draft')
	const step = (event: WorkflowEvent, actor: WorkflowActor) => {
		const result = decideTransition(snapshot, event, actor, NOW)
		if (!result.ok) throw result.error
		const voided = result.value.effects.some((effect) => effect.kind === 'void-signatures')
		const recorded = result.value.effects.flatMap((effect) =>
			effect.kind === 'record-signature' && actor !== SYSTEM ? [signature(actor, effect.meaning, 0)] : [],
		)
		snapshot = {
			...snapshot,
			state: result.value.next,
			signatures: voided ? [] : [...snapshot.signatures, ...recorded],
		}
	}
	step(eventFor('submit'), AUTHOR)
	step(eventFor('sign-reviewed'), REVIEWER)
	step(eventFor('reject'), APPROVER)
	expect(snapshot).toMatchObject({ state: 'draft', signatures: [] })
	step(eventFor('submit'), AUTHOR)
	expect(decideTransition(snapshot, eventFor('sign-approved'), APPROVER, NOW)).toMatchObject({
		ok: false,
		error: { code: 'sequence' },
	})
	step(eventFor('sign-reviewed'), REVIEWER)
	step(eventFor('sign-approved'), APPROVER)
	expect(snapshot.state).toBe('approved')
})

test('[WF-007] make-effective is refused before the effective date and supersedes the predecessor after it', () => {
	// Issue 5 item 1 (effective date applied by itself; the predecessor superseded in the same transaction).
	const effectiveFrom = new Date(NOW.getTime() + HOUR)
	const approved = version('approved', { effectiveFrom })
	const early = decideTransition(approved, { type: 'make-effective' }, SYSTEM, NOW)
	expect(early).toMatchObject({ ok: false, error: { code: 'not-due', status: 409 } })
	if (!early.ok) expect(early.error.message).toContain(effectiveFrom.toISOString())
	const due = decideTransition(approved, { type: 'make-effective' }, SYSTEM, effectiveFrom)
	expect(due.ok && due.value.next).toBe('effective')
	expect(due.ok && due.value.effects[0]).toEqual({ kind: 'supersede-previous' })
	// People do not apply effective dates, not even approvers.
	expect(decideTransition(approved, { type: 'make-effective' }, APPROVER, effectiveFrom)).toMatchObject({
		ok: false,
		error: { code: 'system-only' },
	})
})

test('[WF-008] make-effective refuses a version without two distinct valid signatures', () => {
	// Defence in depth for 21 CFR 11.10(f) — FACTS.md §3.1 [READ]; data that should never occur.
	const missing = version('approved', { signatures: [signature(REVIEWER, 'reviewed')] })
	expect(decideTransition(missing, { type: 'make-effective' }, SYSTEM, NOW)).toMatchObject({
		ok: false,
		error: { code: 'inconsistent' },
	})
	const same = version('approved', { signatures: [signature(REVIEWER, 'reviewed'), signature(REVIEWER, 'approved')] })
	expect(decideTransition(same, { type: 'make-effective' }, SYSTEM, NOW)).toMatchObject({ ok: false })
	expect(
		decideTransition(version('approved', { effectiveFrom: null }), { type: 'make-effective' }, SYSTEM, NOW),
	).toMatchObject({
		ok: false,
		error: { code: 'inconsistent' },
	})
})

test('[WF-009] submission requirements: change reason after version 1, a reference spectrum, at least one band', () => {
	// PRODUCT.md §3 (mandatory change reason after the first version); EU GMP Annex 11 §9 — FACTS.md §3.2 [READ-2°];
	// 21 CFR 11.10(f) "cannot sign a draft that has unresolved required fields" — FACTS.md §3.1 [READ].
	const submit = (overrides: Partial<VersionSnapshot>) =>
		decideTransition(version('draft', overrides), eventFor('submit'), AUTHOR, NOW)
	expect(submit({ versionNumber: 1, changeReason: null }).ok).toBe(true)
	expect(submit({ versionNumber: 2, changeReason: 'typo' })).toMatchObject({
		ok: false,
		error: { code: 'precondition' },
	})
	expect(submit({ hasReferenceSpectrum: false })).toMatchObject({ ok: false, error: { code: 'precondition' } })
	expect(submit({ bandCount: 0 })).toMatchObject({ ok: false, error: { code: 'precondition' } })
	const all = submit({ changeReason: null, hasReferenceSpectrum: false, bandCount: 0 })
	expect(all.ok).toBe(false)
	if (!all.ok) {
		expect(all.error.message).toMatch(/reason for change/)
		expect(all.error.message).toMatch(/reference spectrum/)
		expect(all.error.message).toMatch(/at least one band/)
	}
	const ok = submit({})
	expect(ok).toEqual({
		ok: true,
		value: {
			next: 'in_review',
			effects: [{ kind: 'notify', template: 'review-requested', to: [{ role: 'reviewer' }] }],
		},
	})
})

test('[WF-010] only the version author submits or withdraws; withdrawal voids signatures collected so far', () => {
	// PRODUCT.md §2 (the author drafts and revises); product rule, no published source.
	const colleague = person('ali', 'author')
	expect(decideTransition(version('draft'), eventFor('submit'), colleague, NOW)).toMatchObject({
		ok: false,
		error: { code: 'not-author' },
	})
	const reviewed = version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] })
	expect(decideTransition(reviewed, eventFor('withdraw'), colleague, NOW)).toMatchObject({ ok: false })
	const withdrawn = decideTransition(reviewed, eventFor('withdraw'), AUTHOR, NOW)
	expect(withdrawn.ok && withdrawn.value.effects[0]).toEqual({ kind: 'void-signatures' })
	// An author cannot reject their own version (they withdraw it instead).
	const authorReviewer = person(AUTHOR.id, 'author', 'reviewer')
	const reject = decideTransition(version('in_review'), eventFor('reject'), authorReviewer, NOW)
	expect(reject).toMatchObject({ ok: false, error: { code: 'segregation' } })
})

test('[WF-011] retiring an effective version needs an approver and a reason', () => {
	// EU GMP Annex 11 §9 reason documented — FACTS.md §3.2 [READ-2°].
	expect(decideTransition(version('effective'), { type: 'retire', reason: 'obsolete' }, APPROVER, NOW)).toMatchObject({
		ok: false,
		error: { code: 'reason' },
	})
	const result = decideTransition(
		version('effective'),
		{ type: 'retire', reason: 'Material no longer purchased' },
		APPROVER,
		NOW,
	)
	expect(result.ok && result.value.next).toBe('retired')
})

const arbitraryActor: fc.Arbitrary<WorkflowActor> = fc.oneof(
	fc.constant(SYSTEM),
	fc.record({
		id: fc.constantFrom('ada', 'rui', 'aya', 'zoe'),
		name: fc.constant('Someone'),
		email: fc.constant('someone@lab.test'),
		roles: fc.subarray(HUMAN_ROLES),
	}),
)

// Biased towards In review and towards signing, so that the property meets many allowed signatures.
const arbitrarySnapshot: fc.Arbitrary<VersionSnapshot> = fc.record({
	state: fc.oneof({ arbitrary: fc.constant('in_review' as const), weight: 3 }, fc.constantFrom(...VERSION_STATES)),
	authorId: fc.constantFrom('ada', 'rui', 'aya', 'zoe'),
	versionNumber: fc.integer({ min: 1, max: 5 }),
	changeReason: fc.option(fc.constantFrom('', 'short', 'A long enough change reason'), { nil: null }),
	signatures: fc.array(
		fc.record({
			userId: fc.constantFrom('ada', 'rui', 'aya', 'zoe'),
			meaning: fc.constantFrom('reviewed' as const, 'approved' as const),
			signedAt: fc.constant(new Date(NOW.getTime() - HOUR)),
		}),
		{ maxLength: 2 },
	),
	openRedlines: fc.oneof({ arbitrary: fc.constant(0), weight: 2 }, fc.integer({ min: 1, max: 2 })),
	effectiveFrom: fc.option(fc.constantFrom(new Date(NOW.getTime() - HOUR), new Date(NOW.getTime() + HOUR)), {
		nil: null,
	}),
	hasReferenceSpectrum: fc.boolean(),
	bandCount: fc.integer({ min: 0, max: 2 }),
})

const arbitraryEvent: fc.Arbitrary<WorkflowEvent> = fc.oneof(
	fc.constantFrom(...WORKFLOW_ACTIONS).map(eventFor),
	{ arbitrary: fc.constantFrom('sign-reviewed' as const, 'sign-approved' as const).map(eventFor), weight: 2 },
	fc.record({
		type: fc.constant('sign' as const),
		meaning: fc.constant('reviewed' as const),
		reauthenticated: fc.boolean(),
	}),
	fc.record({ type: fc.constant('reject' as const), reason: fc.string({ maxLength: 12 }) }),
)

test('[SIG-009] for any version, event and actor: no self-signature, no double signature, no signing over redlines', () => {
	// Segregation of duties — PRODUCT.md §2; 21 CFR 11.10(f)/(g), 11.200(a) — FACTS.md §3.1 [READ]. Property test.
	let signed = 0
	fc.assert(
		fc.property(arbitrarySnapshot, arbitraryEvent, arbitraryActor, (snapshot, event, actor) => {
			const result = decideTransition(snapshot, event, actor, NOW)
			if (!result.ok) return
			if (event.type === 'sign') signed++
			const next = ALLOWED[actionOf(event)][snapshot.state]
			expect(result.value.next).toBe(next)
			if (event.type !== 'sign') return
			expect(actor).not.toBe(SYSTEM)
			if (actor === SYSTEM) return
			expect(actor.id).not.toBe(snapshot.authorId)
			expect(snapshot.signatures.map((s) => s.userId)).not.toContain(actor.id)
			expect(snapshot.openRedlines).toBe(0)
			expect(event.reauthenticated).toBe(true)
			expect(actor.roles).toContain(event.meaning === 'reviewed' ? 'reviewer' : 'approver')
		}),
		{ numRuns: 5000 },
	)
	expect(signed).toBeGreaterThan(50) // the property was not vacuous
})

test('[WF-012] available actions: buttons for the actor, disabled with the reason when blocked', () => {
	// UI mirror of the server's checks (STYLE.md §0.4: hiding UI is cosmetic, the server decides).
	const names = (snapshot: VersionSnapshot, actor: WorkflowActor) =>
		availableActions(snapshot, actor, NOW).map((a) => [a.action, a.enabled, a.reason] as const)
	expect(names(version('draft'), AUTHOR)).toEqual([['submit', true, null]])
	expect(names(version('in_review'), AUTHOR)).toEqual([['withdraw', true, null]])
	expect(names(version('in_review', { openRedlines: 1 }), REVIEWER)).toEqual([
		['reject', true, null],
		['sign-reviewed', false, '1 open redline must be resolved first.'],
	])
	expect(names(version('in_review'), APPROVER)).toEqual([
		['reject', true, null],
		['sign-approved', false, 'The version must be signed as reviewed before it can be approved.'],
	])
	const authorReviewer = person(AUTHOR.id, 'author', 'reviewer')
	expect(names(version('in_review'), authorReviewer)).toEqual([
		['withdraw', true, null],
		['reject', false, 'You authored this version: withdraw it from review instead of rejecting it.'],
		['sign-reviewed', false, 'You authored this version: someone else must review it.'],
	])
	expect(names(version('effective'), APPROVER)).toEqual([['retire', true, null]])
	expect(names(version('approved'), SYSTEM)).toEqual([['make-effective', true, null]])
	for (const state of VERSION_STATES) {
		expect(availableActions(version(state), person('ivy', 'inspector'), NOW)).toEqual([])
		expect(availableActions(version(state), person('adm', 'admin'), NOW)).toEqual([])
	}
	const [sign] = availableActions(
		version('in_review', { signatures: [signature(REVIEWER, 'reviewed')] }),
		APPROVER,
		NOW,
	).filter((a) => a.action === 'sign-approved')
	expect(sign).toMatchObject({ enabled: true, needs: { reason: 'none', reauthentication: true, effectiveFrom: true } })
})

test('[SIG-010] the signature statement names signer, meaning, document and version', () => {
	// 21 CFR 11.50(a)(1) printed name and (a)(3) meaning — FACTS.md §3.1 [READ-2°].
	const subject = { documentNumber: 'SPEC-0042', versionNumber: 3, printedName: 'Rui Reviewer' }
	const reviewed = signatureStatement('reviewed', subject)
	expect(reviewed).toContain('I, Rui Reviewer, have reviewed version 3 of specification SPEC-0042')
	const approved = signatureStatement('approved', {
		...subject,
		printedName: 'Aya Approver',
		contentHash: 'ab'.repeat(32),
	})
	expect(approved).toContain('I, Aya Approver, approve version 3 of specification SPEC-0042')
	expect(approved).toContain(`content SHA-256 ${'ab'.repeat(32)}`)
	expect(approved).not.toBe(signatureStatement('reviewed', { ...subject, printedName: 'Aya Approver' }))
})

test('[SIG-011] the manifestation shows printed name, meaning, and date and time in UTC and the signer zone', () => {
	// 21 CFR 11.50(a)(1)–(3) and (b) — FACTS.md §3.1 [READ-2°]; zone abbreviation from the runtime's ICU data.
	const subject = { documentNumber: 'SPEC-0042', versionNumber: 3, printedName: 'Aya Approver' }
	const signedAt = new Date('2026-03-02T14:05:09Z')
	expect(signatureManifestation({ meaning: 'approved', signedAt, timeZone: 'Europe/Paris' }, subject)).toEqual({
		printedName: 'Aya Approver',
		meaning: 'Approved',
		signedAtUtc: '2026-03-02 14:05:09 UTC',
		signedAtLocal: '2026-03-02 15:05:09 CET (Europe/Paris)',
		statement: signatureStatement('approved', subject),
	})
	expect(signatureManifestation({ meaning: 'reviewed', signedAt, timeZone: 'UTC' }, subject).signedAtLocal).toBe(
		'2026-03-02 14:05:09 UTC',
	)
})

test('[WF-020] someone who edited the draft counts as its author: they may not review or approve it', () => {
	// PRODUCT.md §2 segregation of duties; 21 CFR 11.10(g) authority checks — FACTS.md §3.1.
	const coEditor = person('cora', 'reviewer', 'approver')
	const snapshot = version('in_review', { coAuthorIds: [coEditor.id] })
	expect(decideTransition(snapshot, eventFor('sign-reviewed'), coEditor, NOW)).toMatchObject({ ok: false })
	expect(decideTransition(snapshot, eventFor('sign-reviewed'), person('rex', 'reviewer'), NOW)).toMatchObject({
		ok: true,
	})
})
