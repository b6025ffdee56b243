/**
 * The document-control workflow of a specification version, as one pure transition function:
 * `decideTransition(snapshot, event, actor, now) → Result<{ next, effects }>`. Only services persist: they load
 * the snapshot, call this, then apply `next` and every effect in one database transaction with its audit event.
 *
 * Draft → In review → Approved → Effective → Superseded, or Approved/Effective → Retired; a rejection or a
 * withdrawal (both from In review) returns the version to Draft, and the signatures collected so far no longer
 * count. Approved versions are locked (by the database too), so they only move forward. The rules follow 21 CFR 11.10(f) (permitted sequencing), 11.10(g) (authority checks), 11.50
 * (signature manifestation) and 11.200(a) (re-authentication at signing); see FACTS.md §3.1, and PRODUCT.md §2 for
 * segregation of duties (author, reviewer and approver of one version are three different people).
 *
 * Pure: no clock (`now` is an argument), no I/O.
 */
import { type Actor, type Role } from '#shared/authz/permissions.ts'
import { Conflict, DomainError, err, Forbidden, ok, type Result } from '#shared/errors.ts'

export const VERSION_STATES = ['draft', 'in_review', 'approved', 'effective', 'superseded', 'retired'] as const
export type VersionState = (typeof VERSION_STATES)[number]

export const STATE_LABELS: Record<VersionState, string> = {
	draft: 'Draft',
	in_review: 'In review',
	approved: 'Approved',
	effective: 'Effective',
	superseded: 'Superseded',
	retired: 'Retired',
}

/** Only a draft's content may change; everything else is frozen (in review) or locked (approved and after). */
export function isContentEditable(state: VersionState): boolean {
	return state === 'draft'
}

/** Locked states: content, band table and referenced spectra can never change again (the database enforces it too). */
export function isLocked(state: VersionState): boolean {
	return state === 'approved' || state === 'effective' || state === 'superseded' || state === 'retired'
}

export const SIGNATURE_MEANINGS = ['reviewed', 'approved'] as const
export type SignatureMeaning = (typeof SIGNATURE_MEANINGS)[number]

export const SIGNATURE_MEANING_LABELS: Record<SignatureMeaning, string> = {
	reviewed: 'Reviewed',
	approved: 'Approved',
}

/** Minimum length, in characters after trimming, of a rejection, retirement or change reason. */
export const MIN_REASON_LENGTH = 10

/**
 * How far in the past an approver's effective date may lie (15 min), to absorb the time between opening the signing
 * dialog and confirming it. An earlier date is refused (no back-dating); an accepted past date is clamped to `now`.
 */
export const EFFECTIVE_FROM_GRACE_MS = 15 * 60 * 1000

export type RecordedSignature = { userId: string; meaning: SignatureMeaning; signedAt: Date }

/**
 * What the workflow needs to know about one version. Built by the service from the database.
 * `signatures` holds only the signatures of the current review cycle: those recorded since the version last
 * entered In review (older ones stay on record but were voided by a rejection or withdrawal).
 */
export type VersionSnapshot = {
	state: VersionState
	authorId: string
	/** Everyone else who edited the version's content; for segregation of duties they count as authors. */
	coAuthorIds?: ReadonlyArray<string>
	versionNumber: number
	changeReason: string | null
	signatures: ReadonlyArray<RecordedSignature>
	openRedlines: number
	/** Set when the approval is signed; null before. */
	effectiveFrom: Date | null
	hasReferenceSpectrum: boolean
	bandCount: number
}

/** The system itself (the scheduler that applies effective dates and supersedes predecessors). */
export const SYSTEM = 'system'
export type WorkflowActor = Actor | typeof SYSTEM

export type WorkflowEvent =
	| { type: 'submit' }
	| { type: 'withdraw'; reason?: string }
	| { type: 'reject'; reason: string }
	| { type: 'sign'; meaning: 'reviewed'; reauthenticated: boolean }
	| { type: 'sign'; meaning: 'approved'; reauthenticated: boolean; effectiveFrom: Date }
	| { type: 'make-effective' }
	| { type: 'supersede' }
	| { type: 'retire'; reason: string }

/** One name per step, as the UI and the audit trail call it. */
export const WORKFLOW_ACTIONS = [
	'submit',
	'withdraw',
	'reject',
	'sign-reviewed',
	'sign-approved',
	'make-effective',
	'supersede',
	'retire',
] as const
export type WorkflowAction = (typeof WORKFLOW_ACTIONS)[number]

export const ACTION_LABELS: Record<WorkflowAction, string> = {
	submit: 'Submit for review',
	withdraw: 'Withdraw from review',
	reject: 'Reject to draft',
	'sign-reviewed': 'Sign as reviewed',
	'sign-approved': 'Sign as approved',
	'make-effective': 'Make effective',
	supersede: 'Supersede',
	retire: 'Retire',
}

export function actionOf(event: WorkflowEvent): WorkflowAction {
	return event.type === 'sign' ? `sign-${event.meaning}` : event.type
}

export type NotificationTemplate =
	| 'review-requested'
	| 'withdrawn'
	| 'rejected'
	| 'ready-to-approve'
	| 'approved'
	| 'effective'
	| 'superseded'
	| 'retired'

export type Recipient = { role: Role } | { userId: string }

export type Effect =
	/** Store a signature of this meaning: signer, printed name, UTC time and zone, the content hash, how re-authenticated. */
	| { kind: 'record-signature'; meaning: SignatureMeaning }
	/** The current cycle's signatures stop counting (kept on record, never edited or deleted): start a new cycle. */
	| { kind: 'void-signatures' }
	/** Store `at` as the version's effective date; the scheduler applies `make-effective` once `now ≥ at`. */
	| { kind: 'schedule-effective'; at: Date }
	/** In the same transaction, apply `supersede` to the specification's previously effective version, if any. */
	| { kind: 'supersede-previous' }
	| { kind: 'notify'; template: NotificationTemplate; to: Array<Recipient> }

export type Transition = { next: VersionState; effects: Array<Effect> }

/**
 * Why a step was refused. `state`, `role`, `system-only`, `not-author` and `step-done` mean the step is not this
 * actor's to take now (the UI hides it); the others mean it is theirs but blocked (the UI shows why).
 */
export type RefusalCode =
	| 'state'
	| 'role'
	| 'system-only'
	| 'not-author'
	| 'step-done'
	| 'segregation'
	| 'sequence'
	| 'open-redlines'
	| 'precondition'
	| 'reason'
	| 'reauthentication'
	| 'effective-date'
	| 'not-due'
	| 'inconsistent'

/** A refusal is an ordinary Forbidden (403), Conflict (409) or DomainError (401/422) carrying a `code`. */
export type TransitionRefusal = DomainError & { readonly code: RefusalCode }

const HIDDEN_CODES: ReadonlySet<RefusalCode> = new Set(['state', 'role', 'system-only', 'not-author', 'step-done'])

function refusal(code: RefusalCode, message: string): TransitionRefusal {
	switch (code) {
		case 'role':
		case 'system-only':
		case 'not-author':
		case 'segregation':
			return Object.assign(new Forbidden(message), { code })
		case 'state':
		case 'step-done':
		case 'sequence':
		case 'open-redlines':
		case 'not-due':
		case 'inconsistent':
			return Object.assign(new Conflict(message), { code })
		case 'reauthentication':
			return Object.assign(new DomainError(message, 401), { code })
		case 'precondition':
		case 'reason':
		case 'effective-date':
			return Object.assign(new DomainError(message, 422), { code })
	}
}

/** States each step starts from, and the roles that may take it there (`system` for the scheduler). */
const STEP_RULES: Record<WorkflowAction, { from: ReadonlyArray<VersionState>; roles: ReadonlyArray<Role> | 'system' }> =
	{
		submit: { from: ['draft'], roles: ['author'] },
		withdraw: { from: ['in_review'], roles: ['author'] },
		// NOTE: an approved version is locked by the database, so it never goes back to draft; an approval that
		// must not take effect is retired instead (approved → retired).
		reject: { from: ['in_review'], roles: ['reviewer', 'approver'] },
		'sign-reviewed': { from: ['in_review'], roles: ['reviewer'] },
		'sign-approved': { from: ['in_review'], roles: ['approver'] },
		'make-effective': { from: ['approved'], roles: 'system' },
		supersede: { from: ['effective'], roles: 'system' },
		retire: { from: ['approved', 'effective'], roles: ['approver'] },
	}

/** A version's submission requirements, as data: the UI lists them, `submit` checks them in this order. */
export const SUBMIT_REQUIREMENTS: ReadonlyArray<{
	id: 'change-reason' | 'reference-spectrum' | 'bands'
	label: string
	met: (snapshot: VersionSnapshot) => boolean
}> = [
	{
		id: 'change-reason',
		label: `Every version after the first states its reason for change (at least ${MIN_REASON_LENGTH} characters)`,
		met: (snapshot) => snapshot.versionNumber <= 1 || isReason(snapshot.changeReason),
	},
	{
		id: 'reference-spectrum',
		label: 'A reference spectrum is linked',
		met: (snapshot) => snapshot.hasReferenceSpectrum,
	},
	{
		id: 'bands',
		label: 'The band table has at least one band',
		met: (snapshot) => snapshot.bandCount >= 1,
	},
]

function isReason(text: string | null | undefined): boolean {
	return (text ?? '').trim().length >= MIN_REASON_LENGTH
}

function currentSignature(snapshot: VersionSnapshot, meaning: SignatureMeaning): RecordedSignature | undefined {
	return snapshot.signatures.find((signature) => signature.meaning === meaning)
}

function signers(snapshot: VersionSnapshot, except?: string): Array<Recipient> {
	const ids = [...new Set(snapshot.signatures.map((signature) => signature.userId))]
	return ids.filter((id) => id !== except).map((userId) => ({ userId }))
}

function plural(count: number, word: string): string {
	return `${count} ${word}${count === 1 ? '' : 's'}`
}

/** Checks that do not depend on the event's payload: state, who the actor is, and the step's place in the sequence. */
function checkStep(
	snapshot: VersionSnapshot,
	action: WorkflowAction,
	actor: WorkflowActor,
	now: Date,
): TransitionRefusal | null {
	const rule = STEP_RULES[action]
	const label = ACTION_LABELS[action]
	const stateLabel = STATE_LABELS[snapshot.state]
	if (!rule.from.includes(snapshot.state)) {
		const needed = rule.from.map((state) => STATE_LABELS[state]).join(' or ')
		return refusal('state', `${label} is not possible: the version is ${stateLabel}, and this step needs ${needed}.`)
	}
	if (rule.roles === 'system') {
		if (actor !== SYSTEM) {
			return refusal(
				'system-only',
				action === 'make-effective'
					? `${label} is applied by the system on the effective date, not by a person.`
					: `${label} is applied by the system when the next version becomes effective, not by a person.`,
			)
		}
	} else {
		if (actor === SYSTEM) return refusal('role', `${label} needs a person; the system cannot take this step.`)
		// NOTE: an Approved version is QA's decision; only an approver may send it back (PRODUCT.md §2).
		const roles: ReadonlyArray<Role> = rule.roles
		if (!actor.roles.some((role) => roles.includes(role))) {
			return refusal('role', `${label} needs the ${roles.join(' or ')} role.`)
		}
	}

	const person = actor === SYSTEM ? null : actor
	const isAuthor =
		person !== null && (person.id === snapshot.authorId || (snapshot.coAuthorIds ?? []).includes(person.id))
	const ownSignature = person && snapshot.signatures.find((signature) => signature.userId === person.id)
	const reviewed = currentSignature(snapshot, 'reviewed')
	switch (action) {
		case 'submit':
		case 'withdraw':
			if (!isAuthor) return refusal('not-author', `Only the author of this version can ${label.toLowerCase()}.`)
			break
		case 'reject':
			if (isAuthor) {
				return refusal(
					'segregation',
					snapshot.state === 'in_review'
						? 'You authored this version: withdraw it from review instead of rejecting it.'
						: 'The author of a version cannot reject it.',
				)
			}
			break
		case 'sign-reviewed':
			if (isAuthor) return refusal('segregation', 'You authored this version: someone else must review it.')
			if (reviewed) return refusal('step-done', 'This version has already been signed as reviewed.')
			if (ownSignature) return refusal('segregation', 'You have already signed this version.')
			if (snapshot.openRedlines > 0) {
				return refusal('open-redlines', `${plural(snapshot.openRedlines, 'open redline')} must be resolved first.`)
			}
			break
		case 'sign-approved':
			if (isAuthor) return refusal('segregation', 'You authored this version: someone else must approve it.')
			if (ownSignature) {
				return refusal(
					'segregation',
					`You signed this version as ${ownSignature.meaning}: a different approver must approve it.`,
				)
			}
			if (!reviewed) return refusal('sequence', 'The version must be signed as reviewed before it can be approved.')
			if (snapshot.openRedlines > 0) {
				return refusal('open-redlines', `${plural(snapshot.openRedlines, 'open redline')} must be resolved first.`)
			}
			break
		case 'make-effective': {
			const approved = currentSignature(snapshot, 'approved')
			const distinct = new Set([snapshot.authorId, reviewed?.userId, approved?.userId])
			if (!reviewed || !approved || distinct.size !== 3) {
				return refusal('inconsistent', 'The version lacks two valid signatures by people other than its author.')
			}
			if (snapshot.effectiveFrom === null) return refusal('inconsistent', 'The version has no effective date.')
			if (now.getTime() < snapshot.effectiveFrom.getTime()) {
				return refusal(
					'not-due',
					`The version becomes effective on ${snapshot.effectiveFrom.toISOString()}, not before.`,
				)
			}
			break
		}
		case 'supersede':
		case 'retire':
			break
	}
	return null
}

/**
 * Decides one workflow step. Returns the next state and the effects the service must apply in the same transaction,
 * or a refusal whose message can be shown as is. Checks run in this order: state, role, who the actor is relative to
 * the version (authorship, earlier signatures), sequence and open redlines, then the event's own data (reason,
 * re-authentication, effective date).
 *
 * `now` is the server's time; an approval's `effectiveFrom` may lie up to EFFECTIVE_FROM_GRACE_MS in the past and
 * is then clamped to `now`. Pure.
 */
export function decideTransition(
	snapshot: VersionSnapshot,
	event: WorkflowEvent,
	actor: WorkflowActor,
	now: Date,
): Result<Transition, TransitionRefusal> {
	const action = actionOf(event)
	const refused = checkStep(snapshot, action, actor, now)
	if (refused) return err(refused)

	switch (event.type) {
		case 'submit': {
			const unmet = SUBMIT_REQUIREMENTS.filter((requirement) => !requirement.met(snapshot))
			if (unmet.length > 0) {
				return err(refusal('precondition', `Cannot submit yet: ${unmet.map((r) => lowerFirst(r.label)).join('; ')}.`))
			}
			return ok({
				next: 'in_review',
				effects: [{ kind: 'notify', template: 'review-requested', to: [{ role: 'reviewer' }] }],
			})
		}
		case 'withdraw':
			return ok({
				next: 'draft',
				effects: [
					{ kind: 'void-signatures' },
					{ kind: 'notify', template: 'withdrawn', to: [{ role: 'reviewer' }, ...signers(snapshot)] },
				],
			})
		case 'reject': {
			if (!isReason(event.reason)) {
				return err(refusal('reason', `A rejection needs a reason of at least ${MIN_REASON_LENGTH} characters.`))
			}
			const effects: Array<Effect> = [{ kind: 'void-signatures' }]
			const rejector = actor === SYSTEM ? undefined : actor.id
			effects.push({
				kind: 'notify',
				template: 'rejected',
				to: [{ userId: snapshot.authorId }, ...signers(snapshot, rejector)],
			})
			return ok({ next: 'draft', effects })
		}
		case 'sign': {
			if (event.reauthenticated !== true) {
				return err(refusal('reauthentication', 'Signing needs your password again (re-authentication).'))
			}
			if (event.meaning === 'reviewed') {
				return ok({
					next: 'in_review',
					effects: [
						{ kind: 'record-signature', meaning: 'reviewed' },
						{ kind: 'notify', template: 'ready-to-approve', to: [{ role: 'approver' }] },
					],
				})
			}
			const at = event.effectiveFrom.getTime()
			if (Number.isNaN(at)) return err(refusal('effective-date', 'The effective date is not a valid date.'))
			if (at < now.getTime() - EFFECTIVE_FROM_GRACE_MS) {
				return err(refusal('effective-date', 'The effective date cannot lie in the past.'))
			}
			return ok({
				next: 'approved',
				effects: [
					{ kind: 'record-signature', meaning: 'approved' },
					{ kind: 'schedule-effective', at: new Date(Math.max(at, now.getTime())) },
					{ kind: 'notify', template: 'approved', to: [{ userId: snapshot.authorId }, ...signers(snapshot)] },
				],
			})
		}
		case 'make-effective':
			return ok({
				next: 'effective',
				effects: [
					{ kind: 'supersede-previous' },
					{ kind: 'notify', template: 'effective', to: [{ userId: snapshot.authorId }, ...signers(snapshot)] },
				],
			})
		case 'supersede':
			return ok({
				next: 'superseded',
				effects: [{ kind: 'notify', template: 'superseded', to: [{ userId: snapshot.authorId }] }],
			})
		case 'retire':
			if (!isReason(event.reason)) {
				return err(refusal('reason', `Retiring needs a reason of at least ${MIN_REASON_LENGTH} characters.`))
			}
			return ok({
				next: 'retired',
				effects: [{ kind: 'notify', template: 'retired', to: [{ userId: snapshot.authorId }, { role: 'approver' }] }],
			})
	}
}

function lowerFirst(text: string): string {
	return text.charAt(0).toLowerCase() + text.slice(1)
}

export type AvailableAction = {
	action: WorkflowAction
	label: string
	enabled: boolean
	/** Why the step is blocked; null when enabled. */
	reason: string | null
	/** What the dialog must collect. */
	needs: { reason: 'required' | 'optional' | 'none'; reauthentication: boolean; effectiveFrom: boolean }
}

const PROBE_REASON = 'x'.repeat(MIN_REASON_LENGTH)

function probeEvent(action: WorkflowAction, now: Date): WorkflowEvent {
	switch (action) {
		case 'submit':
		case 'make-effective':
		case 'supersede':
			return { type: action }
		case 'withdraw':
			return { type: 'withdraw' }
		case 'reject':
		case 'retire':
			return { type: action, reason: PROBE_REASON }
		case 'sign-reviewed':
			return { type: 'sign', meaning: 'reviewed', reauthenticated: true }
		case 'sign-approved':
			return { type: 'sign', meaning: 'approved', reauthenticated: true, effectiveFrom: now }
	}
}

function needsOf(action: WorkflowAction): AvailableAction['needs'] {
	const reason = action === 'reject' || action === 'retire' ? 'required' : action === 'withdraw' ? 'optional' : 'none'
	const signing = action === 'sign-reviewed' || action === 'sign-approved'
	return { reason, reauthentication: signing, effectiveFrom: action === 'sign-approved' }
}

/**
 * The steps to offer this actor on this version, for the UI: a step that is not theirs to take in this state is
 * left out; one that is theirs but blocked (self-review, open redlines, missing review, unmet submission
 * requirements) is listed disabled with the reason. Derived from `decideTransition` itself, so the buttons never
 * disagree with the server. Pure.
 */
export function availableActions(snapshot: VersionSnapshot, actor: WorkflowActor, now: Date): Array<AvailableAction> {
	const offered: Array<AvailableAction> = []
	for (const action of WORKFLOW_ACTIONS) {
		const result = decideTransition(snapshot, probeEvent(action, now), actor, now)
		if (!result.ok && HIDDEN_CODES.has(result.error.code)) continue
		offered.push({
			action,
			label: ACTION_LABELS[action],
			enabled: result.ok,
			reason: result.ok ? null : result.error.message,
			needs: needsOf(action),
		})
	}
	return offered
}

/** What the signer reads in the signing dialog and what prints beside the signature in every manifest. */
export type SignatureSubject = {
	documentNumber: string
	versionNumber: number
	printedName: string
	/** SHA-256 (hex) of the canonical content being signed; quoted in the statement when given. */
	contentHash?: string
}

/**
 * The statement a signature stands for. Names the signer, the document and version, and the meaning, as
 * 21 CFR 11.50(a) requires of a signed record (the date and time are added by `signatureManifestation`).
 */
export function signatureStatement(meaning: SignatureMeaning, subject: SignatureSubject): string {
	const what = `version ${subject.versionNumber} of specification ${subject.documentNumber}`
	const bound = subject.contentHash ? ` (content SHA-256 ${subject.contentHash})` : ''
	const body =
		meaning === 'reviewed'
			? `I, ${subject.printedName}, have reviewed ${what}${bound} and confirm that its content is technically correct and complete.`
			: `I, ${subject.printedName}, approve ${what}${bound} for use as a controlled specification from its effective date.`
	return `${body} I understand that this electronic signature is the legally binding equivalent of my handwritten signature.`
}

export type SignatureManifestation = {
	printedName: string
	meaning: string
	/** e.g. "2026-03-02 14:05:09 UTC" */
	signedAtUtc: string
	/** e.g. "2026-03-02 15:05:09 CET (Europe/Paris)" — the signer's zone; equals the UTC text for zone 'UTC'. */
	signedAtLocal: string
	statement: string
}

/**
 * The manifestation of one signature on screen and in print (21 CFR 11.50(a)(1)–(3), (b)): printed name, date and
 * time with zone, meaning, and the statement. `timeZone` is an IANA zone such as 'Europe/Paris'. Pure.
 */
export function signatureManifestation(
	signature: { meaning: SignatureMeaning; signedAt: Date; timeZone: string },
	subject: SignatureSubject,
): SignatureManifestation {
	return {
		printedName: subject.printedName,
		meaning: SIGNATURE_MEANING_LABELS[signature.meaning],
		signedAtUtc: formatInZone(signature.signedAt, 'UTC'),
		signedAtLocal: formatInZone(signature.signedAt, signature.timeZone),
		statement: signatureStatement(signature.meaning, subject),
	}
}

/**
 * A signing time as the signer saw it: 'YYYY-MM-DD hh:mm:ss' in `timeZone` (IANA) with its abbreviation and the zone,
 * e.g. '2025-03-14 10:42:07 CET (Europe/Paris)', or '… UTC'. Pure; used by every signature manifestation.
 */
export function formatInZone(date: Date, timeZone: string): string {
	const parts = new Intl.DateTimeFormat('en-GB', {
		timeZone,
		year: 'numeric',
		month: '2-digit',
		day: '2-digit',
		hour: '2-digit',
		minute: '2-digit',
		second: '2-digit',
		hourCycle: 'h23',
		timeZoneName: 'short',
	}).formatToParts(date)
	const part = (type: Intl.DateTimeFormatPartTypes) => parts.find((p) => p.type === type)?.value ?? ''
	const stamp = `${part('year')}-${part('month')}-${part('day')} ${part('hour')}:${part('minute')}:${part('second')}`
	return timeZone === 'UTC' ? `${stamp} UTC` : `${stamp} ${part('timeZoneName')} (${timeZone})`
}
