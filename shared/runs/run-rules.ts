/**
 * The rules of an identity run, pure and shared by the server and the pages:
 * - its outcome: any container that does not conform or is inconclusive flags the whole run for investigation
 *   (the out-of-specification path; common practice, no source);
 * - its signatures: the analyst who recorded it signs it as performed, then a second person verifies it
 *   (never the performer: segregation of duties, common practice, no source);
 * - its investigation: an approver concludes it as confirmed (the lot fails) or invalidated (a laboratory error
 *   was found, so a retest decides); a retest is a new run linked to the flagged one, which stays on record;
 * - the disposition of a lot, derived from all its runs: no retest can release a lot while an investigation is open.
 */
import { can, type Actor } from '#shared/authz/permissions.ts'
import { DomainError, err, Forbidden, ok, type Result } from '#shared/errors.ts'
import type { Verdict } from '#shared/spectra/compare.ts'

export type RunState = 'recorded' | 'performed' | 'verified'
export type RunOutcome = 'conforms' | 'flagged'
export type InvestigationConclusion = 'confirmed' | 'invalidated'
export type RunSignatureMeaning = 'performed' | 'verified'

export const RUN_STATE_LABELS: Record<RunState, string> = {
	recorded: 'Awaiting analyst signature',
	performed: 'Awaiting verification',
	verified: 'Verified',
}

export const CONCLUSION_LABELS: Record<InvestigationConclusion, string> = {
	confirmed: 'Confirmed: the lot does not conform',
	invalidated: 'Invalidated: laboratory error assigned, the retest decides',
}

/** Shortest reason or summary a person must write (same rule as workflow reasons). */
export const MIN_RUN_TEXT_LENGTH = 10

/** The run is flagged as soon as one container is not a clear 'conforms'. */
export function runOutcome(verdicts: ReadonlyArray<Verdict>): RunOutcome {
	return verdicts.length > 0 && verdicts.every((verdict) => verdict === 'conforms') ? 'conforms' : 'flagged'
}

export type RunSnapshot = {
	state: RunState
	outcome: RunOutcome
	recordedBy: string
	/** Who signed it as performed, once signed. */
	performedBy: string | null
	investigationConclusion: InvestigationConclusion | null
}

export type RunEvent =
	| { type: 'sign-performed' }
	| { type: 'verify' }
	| { type: 'close-investigation'; conclusion: InvestigationConclusion; summary: string }

export type RunStep = { next: RunState; signature: RunSignatureMeaning | null }

/**
 * Whether this actor may take this kind of step on the run now: every rule but the written text, so that a page can
 * offer exactly the steps the server will accept. The reason in plain words when not.
 */
export function runStepPermitted(run: RunSnapshot, type: RunEvent['type'], actor: Actor): Result<RunStep, DomainError> {
	switch (type) {
		case 'sign-performed':
			if (!can(actor, 'run:record')) return err(new Forbidden('Only analysts sign identity runs as performed.'))
			if (run.state !== 'recorded') return err(new DomainError('This run is already signed as performed.', 409))
			if (actor.id !== run.recordedBy)
				return err(new Forbidden('Only the analyst who recorded this run may sign it as performed.'))
			return ok({ next: 'performed', signature: 'performed' })
		case 'verify':
			if (!can(actor, 'run:verify')) return err(new Forbidden('Your roles do not allow verifying identity runs.'))
			if (run.state === 'recorded')
				return err(new DomainError('The analyst has not signed this run yet; it cannot be verified.', 409))
			if (run.state === 'verified') return err(new DomainError('This run is already verified.', 409))
			if (actor.id === run.recordedBy || actor.id === run.performedBy)
				return err(new Forbidden('A run is verified by a second person, not by the analyst who performed it.'))
			return ok({ next: 'verified', signature: 'verified' })
		case 'close-investigation':
			if (!can(actor, 'investigation:close'))
				return err(new Forbidden('Only approvers (quality assurance) conclude investigations.'))
			if (run.outcome !== 'flagged') return err(new DomainError('This run is not under investigation.', 409))
			if (run.state !== 'verified')
				return err(
					new DomainError('Verify the flagged run first: the investigation starts from a verified record.', 409),
				)
			if (run.investigationConclusion) return err(new DomainError('This investigation is already concluded.', 409))
			if (actor.id === run.recordedBy || actor.id === run.performedBy)
				return err(new Forbidden('The analyst who performed the run cannot conclude its investigation.'))
			return ok({ next: run.state, signature: null })
	}
}

/** Decides one step of a run for one actor; the reason in plain words when refused. */
export function decideRunStep(run: RunSnapshot, event: RunEvent, actor: Actor): Result<RunStep, DomainError> {
	const permitted = runStepPermitted(run, event.type, actor)
	if (!permitted.ok) return permitted
	if (event.type === 'close-investigation' && event.summary.trim().length < MIN_RUN_TEXT_LENGTH)
		return err(new DomainError(`Write the investigation summary (at least ${MIN_RUN_TEXT_LENGTH} characters).`, 422))
	return permitted
}

/** Whether `original` may be retested at all (the reason is asked for with the retest). */
export function retestPermitted(original: RunSnapshot): Result<true, DomainError> {
	if (original.outcome !== 'flagged')
		return err(new DomainError('Only a run flagged for investigation can be retested.', 409))
	if (original.investigationConclusion === 'confirmed')
		return err(
			new DomainError('The investigation confirmed the result: the lot does not conform and is not retested.', 409),
		)
	return ok(true)
}

/** Whether a retest of `original` may be recorded; a retest always needs a written reason. */
export function decideRetest(original: RunSnapshot, reason: string): Result<true, DomainError> {
	const permitted = retestPermitted(original)
	if (!permitted.ok) return permitted
	if (reason.trim().length < MIN_RUN_TEXT_LENGTH)
		return err(new DomainError(`Give the reason for the retest (at least ${MIN_RUN_TEXT_LENGTH} characters).`, 422))
	return permitted
}

export type LotDisposition =
	'untested' | 'in-progress' | 'released' | 'under-investigation' | 'rejected' | 'retest-needed'

export const DISPOSITION_LABELS: Record<LotDisposition, string> = {
	untested: 'Not tested',
	'in-progress': 'Testing in progress',
	released: 'Identity confirmed',
	'under-investigation': 'Under investigation',
	rejected: 'Does not conform',
	'retest-needed': 'Retest needed',
}

export type LotRun = Pick<RunSnapshot, 'state' | 'outcome' | 'investigationConclusion'>

/**
 * The identity-test disposition of a lot from all its runs. Invalidated runs no longer count; every other run
 * must be verified and conforming for the identity to be confirmed. Release of the lot itself stays with the
 * lab's quality unit under its own procedures.
 */
export function lotDisposition(runs: ReadonlyArray<LotRun>): LotDisposition {
	if (runs.length === 0) return 'untested'
	if (runs.some((run) => run.outcome === 'flagged' && run.investigationConclusion === 'confirmed')) return 'rejected'
	if (runs.some((run) => run.outcome === 'flagged' && run.investigationConclusion === null))
		return 'under-investigation'
	const standing = runs.filter((run) => !(run.outcome === 'flagged' && run.investigationConclusion === 'invalidated'))
	if (standing.length === 0) return 'retest-needed'
	if (standing.some((run) => run.state !== 'verified')) return 'in-progress'
	return 'released'
}

export type RunSignatureSubject = {
	runNumber: string
	lotNumber: string
	materialName: string
	printedName: string
	recordSha256: string
}

/** The statement a signer agrees to, bound to the run's record hash (21 CFR 11.50). */
export function runSignatureStatement(meaning: RunSignatureMeaning, subject: RunSignatureSubject): string {
	const what = `identity run ${subject.runNumber} on lot ${subject.lotNumber} of ${subject.materialName} (record SHA-256 ${subject.recordSha256})`
	const body =
		meaning === 'performed'
			? `I, ${subject.printedName}, performed ${what} and confirm that every container result recorded is complete and accurate.`
			: `I, ${subject.printedName}, have verified ${what}: the samples, instrument check, data and verdicts are complete and correct.`
	return `${body} I understand that this electronic signature is the legally binding equivalent of my handwritten signature.`
}
