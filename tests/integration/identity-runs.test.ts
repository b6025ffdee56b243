/**
 * Identity runs against real spectra of the shared set (../shared/reference-spectra, SOURCES.md):
 * - reference: 4-chloroaniline, solid, PE 1000 (compounds/4_chloroaniline_solid_pe1000.jdx);
 * - a conforming container: the same measurement stored in another file (…_single.jdx, DIF+DUP, descending axis);
 * - other conforming containers: replicates of the reference with seeded noise (tests/support/container-samples.ts);
 * - a non-conforming container: 3-chloroaniline, a positional isomer that must not match (SOURCES.md "must not match");
 * - instrument checks: the PE 1600 polystyrene film (passes Ph. Eur. 2.2.24 FT ±1.0 cm⁻¹: its bands 3059.4, 2849.3,
 *   1942.4, 1601.0, 1582.8, 1154.3, 1028.2 per SOURCES.md are within 1 cm⁻¹ of the table) and the ATR diamond film
 *   (SOURCES.md: ATR bands sit low, "do not expect the transmission acceptance limits to pass").
 */
import { count, eq, sql } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { identityRuns, lots, runContainers } from '#app/.server/db/schema/runs.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { getLot, getRun, trendPoints } from '#app/.server/queries/runs.ts'
import {
	concludeInvestigation,
	recordIdentityRun,
	RunInputRefused,
	signIdentityRun,
} from '#app/.server/services/identity-runs.ts'
import { canonicalJson, sha256Hex } from '#shared/specs/canonical.ts'
import { containerFiles } from '#tests/support/container-samples.ts'
import { auditActionsFor } from '#tests/support/factories.ts'
import { makeReleaseLab, type ReleaseLab } from '#tests/support/release-lab.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

const DAY = 86_400_000
/** PostgreSQL SQLSTATE 42501 insufficient_privilege, raised by the triggers of drizzle/0011. */
const refusedWith = (message: RegExp) => ({ cause: { code: '42501', message: expect.stringMatching(message) } })
const REFERENCE = 'compounds/4_chloroaniline_solid_pe1000.jdx'
const SAME_MEASUREMENT = 'compounds/4_chloroaniline_solid_pe1000_single.jdx'
const ISOMER = 'compounds/3_chloroaniline_pe1000.jdx'

let lotSequence = 0
const nextLot = () => `L${Date.now() % 100000}-${++lotSequence}`

async function tableCounts() {
	const [lotRows] = await db.select({ n: count() }).from(lots)
	const [runRows] = await db.select({ n: count() }).from(identityRuns)
	const [spectrumRows] = await db.select({ n: count() }).from(spectra)
	return { lots: lotRows!.n, runs: runRows!.n, spectra: spectrumRows!.n }
}

function firstRun(
	s: ReleaseLab,
	files: Array<{ fileName: string; bytes: Uint8Array }>,
	lotNumber: string,
	now = new Date(),
) {
	return recordIdentityRun(db, {
		kind: 'first',
		actor: s.analyst,
		specificationId: s.version.specificationId,
		lot: { lotNumber, supplier: 'Northbridge Fine Chemicals', containerCount: files.length, receivedOn: '2026-11-30' },
		instrumentId: s.instrumentId,
		files,
		now,
	})
}

test('[RUN-001] a polystyrene check decides pass or fail with each band deviation (Ph. Eur. 2.2.24 FT table, ±1.0 cm⁻¹)', async () => {
	const good = await makeReleaseLab({ film: 'real' })
	expect(good.check!.passed).toBe(true)
	for (const band of good.check!.check.bands) {
		expect(Math.abs(band.deviation!)).toBeLessThanOrEqual(1.0)
	}
	// SOURCES.md: ATR film bands sit low (1599.4, 1582.0, 1026.3); the transmission limits do not pass.
	const atr = await makeReleaseLab({ film: 'atr' })
	expect(atr.check!.passed).toBe(false)
	expect(atr.check!.check.reasons.length).toBeGreaterThan(0)
	expect(await auditActionsFor(db, atr.instrumentId)).toEqual(['instrument.registered', 'instrument-check.failed'])
})

test('[RUN-002] an instrument never checked, whose last check failed or whose check expired cannot be used; nothing is stored', async () => {
	const unchecked = await makeReleaseLab({ film: null })
	const failed = await makeReleaseLab({ film: 'atr' })
	const expired = await makeReleaseLab({ checkedAt: new Date(Date.now() - 31 * DAY) })
	const files = containerFiles('X', [{ relPath: REFERENCE, seed: 1 }])
	const before = await tableCounts()
	const outcomes = [
		await firstRun(unchecked, files, nextLot()),
		await firstRun(failed, files, nextLot()),
		await firstRun(expired, files, nextLot()),
	]
	const messages = outcomes.map((outcome) => {
		expect(outcome.ok).toBe(false)
		if (outcome.ok) return ''
		expect(outcome.error.status).toBe(409)
		return outcome.error.message
	})
	expect(messages[0]).toMatch(/no polystyrene check on record\. Record a passing check/)
	expect(messages[1]).toMatch(/failed\. Have the instrument serviced or re-checked/)
	expect(messages[2]).toMatch(/expired on \d{4}-\d{2}-\d{2}\. Record a new check/)
	expect(await tableCounts()).toEqual(before)
})

test('[RUN-003] a five-container lot of the right material conforms; the analyst signs, a second person verifies, the identity is confirmed', async () => {
	const s = await makeReleaseLab()
	const lotNumber = nextLot()
	const files = containerFiles(lotNumber, [
		{ relPath: SAME_MEASUREMENT },
		{ relPath: REFERENCE, seed: 11 },
		{ relPath: REFERENCE, seed: 12 },
		{ relPath: REFERENCE, seed: 13 },
		{ relPath: REFERENCE, seed: 14 },
	])
	const recorded = await firstRun(s, files, lotNumber)
	if (!recorded.ok) throw recorded.error
	expect(recorded.value.outcome).toBe('conforms')
	expect(recorded.value.runNumber).toMatch(/^IDR-\d{4}-\d{4}$/)
	const run = (await getRun(db, recorded.value.runId))!
	expect(run.containers.map((row) => [row.containerNumber, row.verdict])).toEqual([
		[1, 'conforms'],
		[2, 'conforms'],
		[3, 'conforms'],
		[4, 'conforms'],
		[5, 'conforms'],
	])
	// SOURCES.md: the _single file is the same measurement (correlation 1.000).
	expect(run.containers[0]!.correlation!).toBeGreaterThan(0.999)
	// The record hash is the SHA-256 of something; it changes with any container's verdict (checked in unit tests).
	expect(run.recordSha256).toMatch(/^[0-9a-f]{64}$/)

	const selfVerify = await signIdentityRun(db, {
		actor: s.analyst,
		runId: run.run.id,
		intent: 'verify',
		now: new Date(),
	})
	expect(selfVerify.ok).toBe(false)
	const otherSigns = await signIdentityRun(db, {
		actor: s.secondAnalyst,
		runId: run.run.id,
		intent: 'sign-performed',
		now: new Date(),
	})
	expect(otherSigns.ok).toBe(false)
	const signed = await signIdentityRun(db, {
		actor: s.analyst,
		runId: run.run.id,
		intent: 'sign-performed',
		now: new Date(),
	})
	expect(signed.ok && signed.value.state).toBe('performed')
	const selfVerifyAfter = await signIdentityRun(db, {
		actor: s.analyst,
		runId: run.run.id,
		intent: 'verify',
		now: new Date(),
	})
	expect(selfVerifyAfter.ok).toBe(false)
	const verified = await signIdentityRun(db, {
		actor: s.secondAnalyst,
		runId: run.run.id,
		intent: 'verify',
		now: new Date(),
	})
	expect(verified.ok && verified.value.state).toBe('verified')
	const lot = (await getLot(db, run.lot.id))!
	expect(lot.disposition).toBe('released')
	const after = (await getRun(db, run.run.id))!
	expect(after.signatures.map((row) => row.meaning)).toEqual(['performed', 'verified'])
	for (const signature of after.signatures) {
		expect(signature.recordSha256).toBe(run.recordSha256)
		expect(signature.statement).toContain(run.recordSha256)
	}
	expect(await auditActionsFor(db, run.run.id)).toEqual([
		'identity-run.recorded',
		'identity-run.signed',
		'identity-run.verified',
	])
	// The samples are frozen evidence.
	await expect(
		db.update(spectra).set({ notes: 'edited' }).where(eq(spectra.id, run.containers[0]!.spectrumId)),
	).rejects.toThrow()
	await expect(
		db.update(runContainers).set({ verdict: 'conforms' }).where(eq(runContainers.runId, run.run.id)),
	).rejects.toMatchObject(refusedWith(/written once/))
	await expect(db.delete(identityRuns).where(eq(identityRuns.id, run.run.id))).rejects.toMatchObject(
		refusedWith(/cannot be removed/),
	)
})

test('[RUN-004] a container of the wrong isomer flags the run; a retest is a new linked record and releases nothing until the investigation is concluded', async () => {
	const s = await makeReleaseLab()
	const lotNumber = nextLot()
	const files = containerFiles(lotNumber, [
		{ relPath: REFERENCE, seed: 21 },
		{ relPath: ISOMER },
		{ relPath: REFERENCE, seed: 23 },
	])
	const recorded = await firstRun(s, files, lotNumber)
	if (!recorded.ok) throw recorded.error
	expect(recorded.value.outcome).toBe('flagged')
	const run = (await getRun(db, recorded.value.runId))!
	expect(run.containers.map((row) => row.verdict)).toEqual(['conforms', 'does-not-conform', 'conforms'])
	expect((run.containers[1]!.result as { reasons: Array<string> }).reasons.length).toBeGreaterThan(0)
	expect(run.containers[1]!.correlation!).toBeLessThan(run.criteria.minCorrelation)

	await signIdentityRun(db, { actor: s.analyst, runId: run.run.id, intent: 'sign-performed', now: new Date() })
	await signIdentityRun(db, { actor: s.secondAnalyst, runId: run.run.id, intent: 'verify', now: new Date() })
	expect((await getLot(db, run.lot.id))!.disposition).toBe('under-investigation')

	const noReason = await recordIdentityRun(db, {
		kind: 'retest',
		actor: s.analyst,
		retestOfId: run.run.id,
		reason: 'short',
		instrumentId: s.instrumentId,
		files: containerFiles(lotNumber, [
			{ relPath: REFERENCE, seed: 31 },
			{ relPath: REFERENCE, seed: 32 },
			{ relPath: REFERENCE, seed: 33 },
		]),
		now: new Date(),
	})
	expect(noReason.ok).toBe(false)
	const retest = await recordIdentityRun(db, {
		kind: 'retest',
		actor: s.analyst,
		retestOfId: run.run.id,
		reason: 'Container 2 resampled after a labelling mix-up was found in the sampling booth.',
		instrumentId: s.instrumentId,
		files: containerFiles(lotNumber, [
			{ relPath: REFERENCE, seed: 31 },
			{ relPath: REFERENCE, seed: 32 },
			{ relPath: REFERENCE, seed: 33 },
		]),
		now: new Date(),
	})
	if (!retest.ok) throw retest.error
	expect(retest.value.outcome).toBe('conforms')
	await signIdentityRun(db, { actor: s.analyst, runId: retest.value.runId, intent: 'sign-performed', now: new Date() })
	await signIdentityRun(db, { actor: s.secondAnalyst, runId: retest.value.runId, intent: 'verify', now: new Date() })
	const retestRun = (await getRun(db, retest.value.runId))!
	expect(retestRun.retestOf?.runNumber).toBe(run.run.runNumber)
	expect((await getRun(db, run.run.id))!.retests.map((row) => row.id)).toEqual([retest.value.runId])
	// The flagged run is still there, still flagged; the conforming retest does not release the lot by itself.
	expect((await getLot(db, run.lot.id))!.disposition).toBe('under-investigation')

	const byAnalyst = await concludeInvestigation(db, {
		actor: s.secondAnalyst,
		runId: run.run.id,
		conclusion: 'invalidated',
		summary: 'Sampling error confirmed by the booth log.',
		now: new Date(),
	})
	expect(byAnalyst.ok).toBe(false)
	const concluded = await concludeInvestigation(db, {
		actor: s.people.approver,
		runId: run.run.id,
		conclusion: 'invalidated',
		summary: 'Sampling error confirmed by the booth log.',
		now: new Date(),
	})
	expect(concluded.ok).toBe(true)
	const lot = (await getLot(db, run.lot.id))!
	expect(lot.disposition).toBe('released')
	expect(lot.runs.map((row) => row.outcome)).toEqual(['flagged', 'conforms'])
	const trend = await trendPoints(db, run.lot.materialId)
	expect(trend.filter((point) => point.lotNumber === lotNumber)).toHaveLength(6)
	await expect(
		db.execute(sql`update identity_runs set investigation_conclusion = 'confirmed' where id = ${run.run.id}`),
	).rejects.toMatchObject(refusedWith(/concluded investigation cannot change/))
})

test('[RUN-005] a confirmed investigation rejects the lot and refuses a retest', async () => {
	const s = await makeReleaseLab()
	const lotNumber = nextLot()
	const recorded = await firstRun(
		s,
		containerFiles(lotNumber, [{ relPath: 'compounds/2_chloroaniline_pe1000.jdx' }]),
		lotNumber,
	)
	if (!recorded.ok) throw recorded.error
	expect(recorded.value.outcome).toBe('flagged')
	await signIdentityRun(db, {
		actor: s.analyst,
		runId: recorded.value.runId,
		intent: 'sign-performed',
		now: new Date(),
	})
	await signIdentityRun(db, { actor: s.secondAnalyst, runId: recorded.value.runId, intent: 'verify', now: new Date() })
	const concluded = await concludeInvestigation(db, {
		actor: s.people.approver,
		runId: recorded.value.runId,
		conclusion: 'confirmed',
		summary: 'Supplier confirmed a mix-up with the 2-isomer in this delivery.',
		now: new Date(),
	})
	expect(concluded.ok).toBe(true)
	const run = (await getRun(db, recorded.value.runId))!
	expect((await getLot(db, run.lot.id))!.disposition).toBe('rejected')
	const retest = await recordIdentityRun(db, {
		kind: 'retest',
		actor: s.analyst,
		retestOfId: recorded.value.runId,
		reason: 'Try again with a fresh sample from the drum.',
		instrumentId: s.instrumentId,
		files: containerFiles(lotNumber, [{ relPath: REFERENCE, seed: 41 }]),
		now: new Date(),
	})
	expect(retest.ok).toBe(false)
	if (!retest.ok) expect(retest.error.message).toMatch(/confirmed/)
})

test('[RUN-006] a file set that misses a container, or gives one file twice, is refused with every reason and stores nothing', async () => {
	const s = await makeReleaseLab()
	const before = await tableCounts()
	const lotNumber = nextLot()
	const twoFiles = containerFiles(lotNumber, [
		{ relPath: REFERENCE, seed: 51 },
		{ relPath: REFERENCE, seed: 52 },
	])
	const missing = await recordIdentityRun(db, {
		kind: 'first',
		actor: s.analyst,
		specificationId: s.version.specificationId,
		lot: { lotNumber, supplier: 'Northbridge Fine Chemicals', containerCount: 3, receivedOn: null },
		instrumentId: s.instrumentId,
		files: twoFiles,
		now: new Date(),
	})
	expect(missing.ok).toBe(false)
	if (!missing.ok) {
		expect(missing.error).toBeInstanceOf(RunInputRefused)
		expect((missing.error as RunInputRefused).problems).toEqual(['Container 3 has no spectrum.'])
	}
	const same = twoFiles[0]!
	const twice = await firstRun(s, [same, { fileName: `${lotNumber}-C02.jdx`, bytes: same.bytes }], lotNumber)
	expect(twice.ok).toBe(false)
	if (!twice.ok) expect((twice.error as RunInputRefused).problems[0]).toMatch(/same bytes as .*-C01\.jdx/)
	const broken = await firstRun(
		s,
		[
			twoFiles[0]!,
			{ fileName: `${lotNumber}-C02.jdx`, bytes: readReferenceFile('format/malformed/truncated_no_end.jdx') },
		],
		lotNumber,
	)
	expect(broken.ok).toBe(false)
	if (!broken.ok) expect((broken.error as RunInputRefused).problems.join(' ')).toMatch(/C02\.jdx: /)
	expect(await tableCounts()).toEqual(before)
})

test('[RUN-007] the record hash is the SHA-256 of the RFC 8785 canonical record (checked with an independent canonical form)', async () => {
	const s = await makeReleaseLab()
	const lotNumber = nextLot()
	const recorded = await firstRun(s, containerFiles(lotNumber, [{ relPath: REFERENCE, seed: 61 }]), lotNumber)
	if (!recorded.ok) throw recorded.error
	const run = (await getRun(db, recorded.value.runId))!
	// Re-derive from what was stored, with keys sorted by hand (RFC 8785 §3.2.3 orders keys by UTF-16 code units).
	const container = run.containers[0]!
	const result = container.result as { correlation: number; derivativeCorrelation: number }
	const document = {
		format: 'bandproof.identity-run/1',
		runNumber: run.run.runNumber,
		material: { code: run.material.code, name: run.material.name },
		lot: { lotNumber, supplier: run.lot.supplier, containerCount: 1, receivedOn: '2026-11-30' },
		specification: {
			documentNumber: run.run.documentNumber,
			versionNumber: run.run.versionNumber,
			contentSha256: run.versionSha256,
		},
		instrument: {
			code: run.instrument.code,
			checkId: run.check.id,
			checkPerformedAt: run.check.performedAt.toISOString(),
			checkValidUntil: run.check.validUntil.toISOString(),
		},
		retestOf: null,
		retestReason: null,
		recordedBy: s.analyst.email,
		recordedAt: run.run.recordedAt.toISOString(),
		containers: [
			{
				container: 1,
				sampleSha256: container.sampleSha256,
				sampleFileName: container.fileName,
				verdict: container.verdict,
				correlation: Math.round(result.correlation * 1e6) / 1e6,
				derivativeCorrelation: Math.round(result.derivativeCorrelation * 1e6) / 1e6,
				algorithmVersion: container.algorithmVersion,
			},
		],
		outcome: 'conforms',
	}
	expect(run.recordSha256).toBe(await sha256Hex(canonicalJson(document)))
})

test('[RUN-008] a lot already recorded is refused before any file is read, and nothing is stored', async () => {
	const lab = await makeReleaseLab()
	const lotNumber = nextLot()
	const first = await firstRun(lab, containerFiles(lotNumber, [{ relPath: REFERENCE, seed: 81 }]), lotNumber)
	expect(first.ok).toBe(true)
	const before = await tableCounts()
	// The second set holds a broken file: the lot refusal comes first, so the file is never read.
	const again = await firstRun(
		lab,
		[{ fileName: `${lotNumber}-C01.jdx`, bytes: readReferenceFile('format/malformed/truncated_no_end.jdx') }],
		lotNumber,
	)
	expect(again.ok).toBe(false)
	if (!again.ok) {
		expect(again.error.status).toBe(409)
		expect(again.error.message).toMatch(/is already recorded for this material/)
	}
	expect(await tableCounts()).toEqual(before)
})
