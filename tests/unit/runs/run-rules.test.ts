import fc from 'fast-check'
import { describe, expect, test } from 'vitest'

import { type Actor, type Role } from '#shared/authz/permissions.ts'
import {
	decideRetest,
	decideRunStep,
	type InvestigationConclusion,
	type LotDisposition,
	lotDisposition,
	type LotRun,
	MIN_RUN_TEXT_LENGTH,
	type RunEvent,
	runOutcome,
	type RunOutcome,
	runSignatureStatement,
	type RunSnapshot,
	type RunState,
	retestPermitted,
	runStepPermitted,
} from '#shared/runs/run-rules.ts'
import type { Verdict } from '#shared/spectra/compare.ts'

// Sources used below:
// - 21 CFR 11.10(f) operational checks enforce permitted sequencing — FACTS.md §3.1 [READ]
// - 21 CFR 11.10(g) authority checks: only authorised people sign — FACTS.md §3.1 [READ]
// - 21 CFR 11.50(a)(1) and (3): the signed record shows the signer's printed name and the meaning — FACTS.md §3.1 [READ-2°]
// - 21 CFR 11.70: the signature is linked to its record (here: the record's SHA-256) — FACTS.md §3.1 [READ]
// - segregation of duties (the performer never verifies their own run nor concludes its investigation):
//   common practice, no source
// - out-of-specification path (any container not clearly conforming flags the run; nothing is retested away; a
//   confirmed result is not retested; a retest is a new, linked record): common practice, no source
const SEQUENCING = '21 CFR 11.10(f) (FACTS.md §3.1, READ)'
const AUTHORITY = '21 CFR 11.10(g) (FACTS.md §3.1, READ)'
const SEGREGATION = 'segregation of duties: common practice, no source'
const OOS = 'out-of-specification path: common practice, no source'

function person(id: string, ...roles: Array<Role>): Actor {
	return { id, name: `Name of ${id}`, email: `${id}@lab.test`, roles }
}

const ANALYST = person('ana', 'analyst')
const SECOND_ANALYST = person('ben', 'analyst')
const REVIEWER = person('rui', 'reviewer')
const APPROVER = person('aya', 'approver')
const AUTHOR = person('ada', 'author')
const ADMIN = person('adm', 'admin')
const INSPECTOR = person('ian', 'inspector')
/** One person holding both roles: the analyst who recorded the run is also in QA. */
const ANALYST_APPROVER = person('ana', 'analyst', 'approver')
const ANALYST_REVIEWER = person('ana', 'analyst', 'reviewer')

const SUMMARY = 'Sampling error confirmed by the booth log and the resample.'

function run(state: RunState, overrides: Partial<RunSnapshot> = {}): RunSnapshot {
	return {
		state,
		outcome: 'conforms',
		recordedBy: ANALYST.id,
		performedBy: state === 'recorded' ? null : ANALYST.id,
		investigationConclusion: null,
		...overrides,
	}
}

describe(`runOutcome — ${OOS}`, () => {
	test.each<[Array<Verdict>, RunOutcome]>([
		[['conforms'], 'conforms'],
		[['conforms', 'conforms', 'conforms', 'conforms', 'conforms'], 'conforms'],
		[['conforms', 'does-not-conform', 'conforms'], 'flagged'],
		[['conforms', 'inconclusive'], 'flagged'],
		[['inconclusive'], 'flagged'],
		[['does-not-conform'], 'flagged'],
		// A run without any container proves nothing, so it cannot conform.
		[[], 'flagged'],
	])('%j → %s', (verdicts, outcome) => {
		expect(runOutcome(verdicts)).toBe(outcome)
	})

	test('property: conforms exactly when there is a container and every one conforms, in any order', () => {
		const verdict = fc.constantFrom<Verdict>('conforms', 'does-not-conform', 'inconclusive')
		fc.assert(
			fc.property(fc.array(verdict, { maxLength: 200 }), (verdicts) => {
				const expected = verdicts.length > 0 && !verdicts.some((v) => v !== 'conforms') ? 'conforms' : 'flagged'
				expect(runOutcome(verdicts)).toBe(expected)
				expect(runOutcome([...verdicts].reverse())).toBe(expected)
			}),
		)
	})
})

type Expectation = { next: RunState; signature: 'performed' | 'verified' | null } | { status: number; message: RegExp }

const SIGN: RunEvent = { type: 'sign-performed' }
const VERIFY: RunEvent = { type: 'verify' }
const CLOSE = (conclusion: InvestigationConclusion = 'invalidated', summary = SUMMARY): RunEvent => ({
	type: 'close-investigation',
	conclusion,
	summary,
})

// Each row written out by hand from the sources above, not from the implementation.
const CASES: Array<[string, RunSnapshot, RunEvent, Actor, Expectation]> = [
	// Signing as performed: the analyst who recorded it, once, first.
	['recorder signs a recorded run', run('recorded'), SIGN, ANALYST, { next: 'performed', signature: 'performed' }],
	['another analyst signs it', run('recorded'), SIGN, SECOND_ANALYST, { status: 403, message: /who recorded/ }],
	['a reviewer signs it', run('recorded'), SIGN, REVIEWER, { status: 403, message: /Only analysts/ }],
	['an approver signs it', run('recorded'), SIGN, APPROVER, { status: 403, message: /Only analysts/ }],
	['an admin signs it', run('recorded'), SIGN, ADMIN, { status: 403, message: /Only analysts/ }],
	['an inspector signs it', run('recorded'), SIGN, INSPECTOR, { status: 403, message: /Only analysts/ }],
	['recorder signs twice', run('performed'), SIGN, ANALYST, { status: 409, message: /already signed/ }],
	['recorder signs a verified run', run('verified'), SIGN, ANALYST, { status: 409, message: /already signed/ }],
	// Verifying: a second person with the permission, after the analyst signed, once.
	['second analyst verifies', run('performed'), VERIFY, SECOND_ANALYST, { next: 'verified', signature: 'verified' }],
	['a reviewer verifies', run('performed'), VERIFY, REVIEWER, { next: 'verified', signature: 'verified' }],
	['an approver verifies', run('performed'), VERIFY, APPROVER, { next: 'verified', signature: 'verified' }],
	['the performer verifies', run('performed'), VERIFY, ANALYST, { status: 403, message: /second person/ }],
	[
		'the performer with a reviewer role verifies',
		run('performed'),
		VERIFY,
		ANALYST_REVIEWER,
		{ status: 403, message: /second person/ },
	],
	[
		'the signer differs from the recorder and verifies',
		run('performed', { performedBy: 'ben' }),
		VERIFY,
		SECOND_ANALYST,
		{ status: 403, message: /second person/ },
	],
	['an author verifies', run('performed'), VERIFY, AUTHOR, { status: 403, message: /do not allow/ }],
	['an admin verifies', run('performed'), VERIFY, ADMIN, { status: 403, message: /do not allow/ }],
	['an inspector verifies', run('performed'), VERIFY, INSPECTOR, { status: 403, message: /do not allow/ }],
	['verify before signing', run('recorded'), VERIFY, SECOND_ANALYST, { status: 409, message: /not signed/ }],
	['verify twice', run('verified'), VERIFY, SECOND_ANALYST, { status: 409, message: /already verified/ }],
	// Concluding an investigation: an approver other than the performer, on a verified flagged run, once, in writing.
	[
		'an approver invalidates a verified flagged run',
		run('verified', { outcome: 'flagged' }),
		CLOSE('invalidated'),
		APPROVER,
		{ next: 'verified', signature: null },
	],
	[
		'an approver confirms a verified flagged run',
		run('verified', { outcome: 'flagged' }),
		CLOSE('confirmed'),
		APPROVER,
		{ next: 'verified', signature: null },
	],
	[
		'an analyst concludes',
		run('verified', { outcome: 'flagged' }),
		CLOSE(),
		SECOND_ANALYST,
		{ status: 403, message: /Only approvers/ },
	],
	[
		'a reviewer concludes',
		run('verified', { outcome: 'flagged' }),
		CLOSE(),
		REVIEWER,
		{ status: 403, message: /Only approvers/ },
	],
	[
		'the performer, also an approver, concludes',
		run('verified', { outcome: 'flagged' }),
		CLOSE(),
		ANALYST_APPROVER,
		{ status: 403, message: /cannot conclude/ },
	],
	[
		'a conforming run has no investigation',
		run('verified'),
		CLOSE(),
		APPROVER,
		{ status: 409, message: /not under investigation/ },
	],
	[
		'a flagged run not yet signed',
		run('recorded', { outcome: 'flagged' }),
		CLOSE(),
		APPROVER,
		{ status: 409, message: /Verify the flagged run first/ },
	],
	[
		'a flagged run not yet verified',
		run('performed', { outcome: 'flagged' }),
		CLOSE(),
		APPROVER,
		{ status: 409, message: /Verify the flagged run first/ },
	],
	[
		'an investigation concluded already',
		run('verified', { outcome: 'flagged', investigationConclusion: 'invalidated' }),
		CLOSE('confirmed'),
		APPROVER,
		{ status: 409, message: /already concluded/ },
	],
	[
		'a summary shorter than the minimum once trimmed',
		run('verified', { outcome: 'flagged' }),
		CLOSE('confirmed', `   ${'x'.repeat(MIN_RUN_TEXT_LENGTH - 1)}   `),
		APPROVER,
		{ status: 422, message: /at least 10 characters/ },
	],
]

test.each(CASES)(
	`[RUN-RULE] %s — ${SEQUENCING}; ${AUTHORITY}; ${SEGREGATION}`,
	(_name, snapshot, event, actor, expected) => {
		const result = decideRunStep(snapshot, event, actor)
		if ('next' in expected) {
			expect(result).toEqual({ ok: true, value: expected })
		} else {
			expect(result.ok).toBe(false)
			if (result.ok) return
			expect(result.error.status).toBe(expected.status)
			expect(result.error.message).toMatch(expected.message)
		}
	},
)

describe(`property: over every state, outcome, conclusion, event and actor — ${SEQUENCING}; ${SEGREGATION}`, () => {
	const ACTORS = [ANALYST, SECOND_ANALYST, REVIEWER, APPROVER, AUTHOR, ADMIN, INSPECTOR, ANALYST_APPROVER]
	const snapshot = fc.record<RunSnapshot>({
		state: fc.constantFrom<RunState>('recorded', 'performed', 'verified'),
		outcome: fc.constantFrom<RunOutcome>('conforms', 'flagged'),
		recordedBy: fc.constantFrom('ana', 'ben'),
		performedBy: fc.constantFrom(null, 'ana', 'ben'),
		investigationConclusion: fc.constantFrom<InvestigationConclusion | null>(null, 'confirmed', 'invalidated'),
	})
	const event = fc.oneof(
		fc.constant<RunEvent>(SIGN),
		fc.constant<RunEvent>(VERIFY),
		fc.record({
			type: fc.constant('close-investigation' as const),
			conclusion: fc.constantFrom<InvestigationConclusion>('confirmed', 'invalidated'),
			summary: fc.constantFrom('', 'too short', SUMMARY),
		}),
	)

	test('an allowed step moves one state forward (or stays, to conclude) and is never taken by the wrong person', () => {
		const ORDER: Record<RunState, number> = { recorded: 0, performed: 1, verified: 2 }
		fc.assert(
			fc.property(snapshot, event, fc.constantFrom(...ACTORS), (current, step, actor) => {
				const result = decideRunStep(current, step, actor)
				if (!result.ok) {
					expect([403, 409, 422]).toContain(result.error.status)
					return
				}
				const moved = ORDER[result.value.next] - ORDER[current.state]
				switch (step.type) {
					case 'sign-performed':
						expect(actor.id).toBe(current.recordedBy)
						expect(actor.roles).toContain('analyst')
						expect(moved).toBe(1)
						break
					case 'verify':
						expect(actor.id).not.toBe(current.recordedBy)
						expect(actor.id).not.toBe(current.performedBy)
						expect(moved).toBe(1)
						break
					case 'close-investigation':
						expect(actor.roles).toContain('approver')
						expect(actor.id).not.toBe(current.recordedBy)
						expect(actor.id).not.toBe(current.performedBy)
						expect(current).toMatchObject({ outcome: 'flagged', state: 'verified', investigationConclusion: null })
						expect(step.summary.trim().length).toBeGreaterThanOrEqual(MIN_RUN_TEXT_LENGTH)
						expect(result.value).toEqual({ next: 'verified', signature: null })
						break
				}
			}),
		)
	})
})

describe(`decideRetest — ${OOS}`, () => {
	const REASON = 'Container 2 resampled after a labelling mix-up in the sampling booth.'

	test('a flagged run under investigation, or invalidated, may be retested with a written reason', () => {
		expect(decideRetest(run('verified', { outcome: 'flagged' }), REASON)).toEqual({ ok: true, value: true })
		expect(decideRetest(run('recorded', { outcome: 'flagged' }), REASON)).toEqual({ ok: true, value: true })
		expect(
			decideRetest(run('verified', { outcome: 'flagged', investigationConclusion: 'invalidated' }), REASON),
		).toEqual({ ok: true, value: true })
	})

	test('a conforming run is not retested (testing into compliance)', () => {
		const result = decideRetest(run('verified'), REASON)
		expect(result).toMatchObject({ ok: false, error: { status: 409 } })
		if (!result.ok) expect(result.error.message).toMatch(/Only a run flagged for investigation/)
	})

	test('a confirmed result is final: no retest', () => {
		const result = decideRetest(run('verified', { outcome: 'flagged', investigationConclusion: 'confirmed' }), REASON)
		expect(result).toMatchObject({ ok: false, error: { status: 409 } })
		if (!result.ok) expect(result.error.message).toMatch(/does not conform and is not retested/)
	})

	test('the reason must have the minimum length once trimmed', () => {
		const flagged = run('verified', { outcome: 'flagged' })
		const short = decideRetest(flagged, `  ${'r'.repeat(MIN_RUN_TEXT_LENGTH - 1)}  `)
		expect(short).toMatchObject({ ok: false, error: { status: 422 } })
		expect(decideRetest(flagged, 'r'.repeat(MIN_RUN_TEXT_LENGTH)).ok).toBe(true)
	})
})

describe(`lotDisposition — ${OOS}`, () => {
	const conforming = (state: RunState = 'verified'): LotRun => ({
		state,
		outcome: 'conforms',
		investigationConclusion: null,
	})
	const flagged = (investigationConclusion: InvestigationConclusion | null, state: RunState = 'verified'): LotRun => ({
		state,
		outcome: 'flagged',
		investigationConclusion,
	})

	test.each<[string, Array<LotRun>, LotDisposition]>([
		['no run', [], 'untested'],
		['one conforming run awaiting its analyst', [conforming('recorded')], 'in-progress'],
		['one conforming run awaiting verification', [conforming('performed')], 'in-progress'],
		['one conforming verified run', [conforming()], 'released'],
		['two conforming verified runs', [conforming(), conforming()], 'released'],
		['a flagged run still open, even unsigned', [flagged(null, 'recorded')], 'under-investigation'],
		['a flagged run open beside a conforming verified retest', [flagged(null), conforming()], 'under-investigation'],
		['a flagged run confirmed', [flagged('confirmed')], 'rejected'],
		['a confirmed run outweighs a conforming retest', [flagged('confirmed'), conforming()], 'rejected'],
		['a confirmed run outweighs another open one', [flagged(null), flagged('confirmed')], 'rejected'],
		['a flagged run invalidated, no retest yet', [flagged('invalidated')], 'retest-needed'],
		['invalidated, retest awaiting verification', [flagged('invalidated'), conforming('performed')], 'in-progress'],
		['invalidated, retest conforming and verified', [flagged('invalidated'), conforming()], 'released'],
		['invalidated, retest flagged in turn', [flagged('invalidated'), flagged(null)], 'under-investigation'],
		['two invalidated runs and nothing standing', [flagged('invalidated'), flagged('invalidated')], 'retest-needed'],
	])('%s → %s', (_name, runs, disposition) => {
		expect(lotDisposition(runs)).toBe(disposition)
	})

	test('property: a lot is released only if a verified conforming run exists and no flagged run stands', () => {
		const lotRun = fc.record<LotRun>({
			state: fc.constantFrom<RunState>('recorded', 'performed', 'verified'),
			outcome: fc.constantFrom<RunOutcome>('conforms', 'flagged'),
			investigationConclusion: fc.constantFrom<InvestigationConclusion | null>(null, 'confirmed', 'invalidated'),
		})
		fc.assert(
			fc.property(fc.array(lotRun, { maxLength: 6 }), (runs) => {
				const disposition = lotDisposition(runs)
				if (disposition === 'released') {
					expect(runs.some((r) => r.outcome === 'conforms' && r.state === 'verified')).toBe(true)
					expect(runs.every((r) => r.outcome === 'conforms' || r.investigationConclusion === 'invalidated')).toBe(true)
				}
				// Order of the runs never matters.
				expect(lotDisposition([...runs].reverse())).toBe(disposition)
			}),
		)
	})
})

describe('runSignatureStatement — 21 CFR 11.50(a)(1),(3) (READ-2°) and 11.70 (READ), FACTS.md §3.1', () => {
	const subject = {
		runNumber: 'IDR-2026-0007',
		lotNumber: 'L2411',
		materialName: '4-Chloroaniline',
		printedName: 'Ana Lindqvist',
		recordSha256: 'a3f1'.repeat(16),
	}

	test.each(['performed', 'verified'] as const)(
		'the %s statement names the signer, the meaning and the record hash',
		(meaning) => {
			const statement = runSignatureStatement(meaning, subject)
			expect(statement).toContain('I, Ana Lindqvist,')
			expect(statement).toContain(meaning)
			expect(statement).toContain('identity run IDR-2026-0007 on lot L2411 of 4-Chloroaniline')
			expect(statement).toContain(`record SHA-256 ${subject.recordSha256}`)
		},
	)

	test('the two meanings give different statements, and another record hash gives another statement', () => {
		const performed = runSignatureStatement('performed', subject)
		expect(runSignatureStatement('verified', subject)).not.toBe(performed)
		const other = runSignatureStatement('performed', { ...subject, recordSha256: 'b4e2'.repeat(16) })
		expect(other).not.toBe(performed)
		expect(other).not.toContain(subject.recordSha256)
	})
})

test(`what a page offers is what the server accepts, the written text aside (${SEGREGATION}; ${OOS})`, () => {
	const people = [ANALYST, SECOND_ANALYST, REVIEWER, APPROVER, AUTHOR, ADMIN, INSPECTOR, ANALYST_APPROVER]
	const states: Array<RunSnapshot> = [
		run('recorded'),
		run('performed', { performedBy: 'ana' }),
		run('verified', { performedBy: 'ana', outcome: 'flagged' }),
		run('verified', { performedBy: 'ana', outcome: 'flagged', investigationConclusion: 'confirmed' }),
	]
	for (const snapshot of states) {
		for (const actor of people) {
			for (const event of [SIGN, VERIFY, CLOSE()]) {
				expect(runStepPermitted(snapshot, event.type, actor).ok).toBe(decideRunStep(snapshot, event, actor).ok)
			}
			if (runStepPermitted(snapshot, 'close-investigation', actor).ok)
				expect(decideRunStep(snapshot, CLOSE('confirmed', '  short  '), actor).ok).toBe(false)
		}
		expect(retestPermitted(snapshot).ok).toBe(decideRetest(snapshot, SUMMARY).ok)
		if (retestPermitted(snapshot).ok) expect(decideRetest(snapshot, 'too short').ok).toBe(false)
	}
})
