/**
 * The PDF record of an identity run, downloaded through its resource route and read back as text (pdfjs-dist), for
 * runs made of real spectra of the shared set (../shared/reference-spectra, SOURCES.md):
 * - reference: 4-chloroaniline, solid, PE 1000 (compounds/4_chloroaniline_solid_pe1000.jdx);
 * - a conforming container: the same measurement in another file (…_single.jdx; SOURCES.md: correlation 1.000);
 * - other conforming containers: seeded replicates of the reference (tests/support/container-samples.ts);
 * - a non-conforming container: 3-chloroaniline, a positional isomer (SOURCES.md "must not match");
 * - the instrument check: a replicate of the PE 1600 polystyrene film, which passes Ph. Eur. 2.2.24 (SOURCES.md).
 */
import { createHash } from 'node:crypto'
import { and, eq } from 'drizzle-orm'
import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { actorContext } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { dossiers } from '#app/.server/db/schema/dossiers.ts'
import { getRun } from '#app/.server/queries/runs.ts'
import { listDossierRecords } from '#app/.server/services/dossiers.ts'
import { concludeInvestigation, recordIdentityRun, signIdentityRun } from '#app/.server/services/identity-runs.ts'
import { recordInstrumentCheck, registerInstrument } from '#app/.server/services/instruments.ts'
import { loader as recordLoader } from '#app/routes/runs/record.ts'
import { loader as dossierLoader } from '#app/routes/specifications/dossier.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { identifyDossier } from '#shared/dossier/identify.ts'
import { containerFiles, replicateOf } from '#tests/support/container-samples.ts'
import { makeActor, makeSignedVersion } from '#tests/support/factories.ts'
import { pdfPageTexts } from '#tests/support/pdf-text.ts'

const REFERENCE = 'compounds/4_chloroaniline_solid_pe1000.jdx'
const SAME_MEASUREMENT = 'compounds/4_chloroaniline_solid_pe1000_single.jdx'
const ISOMER = 'compounds/3_chloroaniline_pe1000.jdx'
const GOOD_FILM = 'polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx'
const NOT_VERIFIED = 'NOT VERIFIED — NOT FOR RELEASE'

let sequence = 0

/** An effective specification, two analysts, an approver and an instrument with a passing polystyrene check. */
async function lab() {
	const people = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const analyst = await makeActor(db, 'analyst')
	const verifier = await makeActor(db, 'analyst')
	const version = await makeSignedVersion(db, people)
	const instrument = await registerInstrument(db, {
		actor: await makeActor(db, 'admin'),
		values: {
			code: `IR-R${++sequence}${Math.random().toString(36).slice(2, 6)}`,
			name: 'Bench FTIR',
			serialNumber: null,
			location: 'QC lab 2',
			checkValidityDays: 30,
			checkTable: 'ph-eur-ft',
		},
		now: new Date(),
	})
	if (!instrument.ok) throw instrument.error
	const check = await recordInstrumentCheck(db, {
		actor: analyst,
		instrumentId: instrument.value.id,
		fileName: `ps-film-r${sequence}.jdx`,
		bytes: replicateOf(GOOD_FILM, 7000 + sequence, 0.001),
		notes: null,
		now: new Date(),
	})
	if (!check.ok || !check.value.passed) throw new Error('the polystyrene check should pass')
	return { ...people, analyst, verifier, version, instrumentId: instrument.value.id }
}

async function recordRun(setting: Awaited<ReturnType<typeof lab>>, sources: Array<{ relPath: string; seed?: number }>) {
	const lotNumber = `R${Date.now() % 100000}-${++sequence}`
	const recorded = await recordIdentityRun(db, {
		kind: 'first',
		actor: setting.analyst,
		specificationId: setting.version.specificationId,
		lot: {
			lotNumber,
			supplier: 'Northbridge Fine Chemicals',
			containerCount: sources.length,
			receivedOn: '2026-11-30',
		},
		instrumentId: setting.instrumentId,
		files: containerFiles(lotNumber, sources),
		now: new Date(),
	})
	if (!recorded.ok) throw recorded.error
	return { ...recorded.value, lotNumber }
}

/** Downloads the record through the route's loader, as the signed-in actor; returns the response and page texts. */
async function download(actor: Actor, runId: string) {
	const context = new RouterContextProvider()
	context.set(actorContext, actor)
	const request = new Request(`http://localhost/runs/${runId}/record.pdf`)
	const url = new URL(request.url)
	const response = await recordLoader({ request, context, params: { runId }, url, pattern: '/runs/:runId/record.pdf' })
	const bytes = new Uint8Array(await response.arrayBuffer())
	return { response, bytes, pages: await pdfPageTexts(bytes) }
}

/** Downloads the version's dossier PDF through the route's loader; `query` e.g. '?runs=include'. */
async function dossierPdf(actor: Actor, version: { specificationId: string; versionId: string }, query = '') {
	const context = new RouterContextProvider()
	context.set(actorContext, actor)
	const path = `/specifications/${version.specificationId}/versions/${version.versionId}/dossier/pdf`
	const request = new Request(`http://localhost${path}${query}`)
	const url = new URL(request.url)
	const params = { specId: version.specificationId, versionId: version.versionId, format: 'pdf' }
	const response = await dossierLoader({ request, context, params, url, pattern: path })
	const bytes = new Uint8Array(await response.arrayBuffer())
	return { response, bytes, pages: await pdfPageTexts(bytes) }
}

/** The status of a thrown `data(…)` or Response. */
async function refusal(run: () => Promise<unknown>): Promise<number> {
	try {
		await run()
	} catch (thrown) {
		if (thrown instanceof Response) return thrown.status
		const status = (thrown as { init?: { status?: number } | null }).init?.status
		if (status) return status
		throw thrown
	}
	throw new Error('expected a refusal')
}

/** A stored correlation as the record prints it: 4 decimals, and a true minus sign (U+2212) for negative values. */
const fixed4 = (value: number | null) => (value === null ? '—' : value.toFixed(4).replace('-', '−'))

test('[RUN-101] a run record prints every container verdict and correlation as stored, the record hash, and NOT VERIFIED until a second person verifies', async () => {
	const s = await lab()
	const recorded = await recordRun(s, [
		{ relPath: SAME_MEASUREMENT },
		{ relPath: REFERENCE, seed: 101 },
		{ relPath: REFERENCE, seed: 102 },
	])
	expect(recorded.outcome).toBe('conforms')
	const run = (await getRun(db, recorded.runId))!

	const before = await download(s.analyst, recorded.runId)
	expect(before.response.headers.get('Content-Type')).toBe('application/pdf')
	expect(before.response.headers.get('Content-Disposition')).toContain(`${recorded.runNumber}-record-not-verified.pdf`)
	expect(before.response.headers.get('X-Content-SHA256')).toBe(createHash('sha256').update(before.bytes).digest('hex'))
	const text = before.pages.join(' ')
	expect(text).toContain(`Identity run ${recorded.runNumber}`)
	expect(text).toContain(recorded.lotNumber)
	expect(text).toContain('Northbridge Fine Chemicals')
	expect(text).toContain(`${run.run.documentNumber} version ${run.run.versionNumber}`)
	expect(text).toContain(run.versionSha256!)
	expect(text).toContain(run.instrument.code)
	expect(text).toContain('Polystyrene check of')
	expect(text).toContain(run.recordSha256)
	// Each container row: number, file, verdict and both correlations, rounded to 4 decimals from the stored values.
	for (const container of run.containers) {
		expect(container.verdict).toBe('conforms')
		expect(text).toContain(
			`${container.containerNumber} ${container.fileName} ${container.sampleSha256.slice(0, 12)}… Conforms ${fixed4(container.correlation)} ${fixed4(container.derivativeCorrelation)}`,
		)
	}
	// SOURCES.md: the _single file is the same measurement as the reference, so its correlation prints as 1.0000.
	expect(fixed4(run.containers[0]!.correlation)).toBe('1.0000')
	// The reference band of the version (1494 cm⁻¹, tests/support/factories.ts) is matched in every container.
	expect(text.match(/Container \d · Conforms/g)).toHaveLength(3)
	expect(text).toMatch(/1494\.0 \d+\.\d aromatic ring C=C stretch Yes 149\d\.\d −?\d+\.\d Yes/)
	// Not yet signed: the mark on every page; page numbers on every page (common practice, no source).
	before.pages.forEach((page, index) => {
		expect(page).toContain(NOT_VERIFIED)
		expect(page).toContain(`Page ${index + 1} of ${before.pages.length}`)
	})
	expect(text).toContain('No signatures yet.')
	expect(text).toContain('supports, and does not replace, the laboratory')

	await signIdentityRun(db, { actor: s.analyst, runId: recorded.runId, intent: 'sign-performed', now: new Date() })
	const signedOnly = await download(s.analyst, recorded.runId)
	expect(signedOnly.pages.join(' ')).toContain(NOT_VERIFIED)
	const verifiedAt = new Date()
	await signIdentityRun(db, { actor: s.verifier, runId: recorded.runId, intent: 'verify', now: verifiedAt })

	const after = await download(s.verifier, recorded.runId)
	const afterText = after.pages.join(' ')
	expect(after.response.headers.get('Content-Disposition')).toContain(`${recorded.runNumber}-record.pdf`)
	expect(afterText).not.toContain('NOT VERIFIED')
	expect(afterText).not.toContain('NOT FOR RELEASE')
	expect(afterText).toContain('Verified record')
	expect(afterText).toContain(`${s.analyst.name} Performed`)
	expect(afterText).toContain(`${s.verifier.name} Verified`)
	// Signed in UTC (the test users' zone, tests/support/factories.ts): the UTC and the local time agree.
	const utc = verifiedAt.toISOString().slice(0, 19).replace('T', ' ')
	expect(afterText).toContain(`${utc} UTC ${utc} UTC`)
	expect(afterText).toContain(`I, ${s.verifier.name}, have verified identity run ${recorded.runNumber}`)
	expect(afterText).toContain(run.recordSha256)
	after.pages.forEach((page, index) => expect(page).toContain(`Page ${index + 1} of ${after.pages.length}`))

	// Every download is in the audit trail with the SHA-256 of the bytes handed out.
	const events = await db
		.select()
		.from(auditEvents)
		.where(and(eq(auditEvents.entityId, recorded.runId), eq(auditEvents.action, 'identity-run.record-downloaded')))
		.orderBy(auditEvents.id)
	expect(events.map((event) => (event.after as { sha256: string }).sha256)).toEqual(
		[before, signedOnly, after].map((file) => file.response.headers.get('X-Content-SHA256')),
	)
	expect(events.map((event) => (event.after as { state: string }).state)).toEqual(['recorded', 'performed', 'verified'])
	expect(events[2]!.actorId).toBe(s.verifier.id)
}, 60_000)

test('[RUN-102] a flagged run prints the failing container with its reasons, then the concluded investigation; a retest names its original and the original names the retest', async () => {
	const s = await lab()
	const flagged = await recordRun(s, [{ relPath: REFERENCE, seed: 111 }, { relPath: ISOMER }])
	expect(flagged.outcome).toBe('flagged')
	const run = (await getRun(db, flagged.runId))!
	const isomer = run.containers[1]!
	expect(isomer.verdict).toBe('does-not-conform')
	const reasons = (isomer.result as { reasons: Array<string> }).reasons
	expect(reasons.length).toBeGreaterThan(0)

	const open = (await download(s.analyst, flagged.runId)).pages.join(' ')
	expect(open).toContain('Outcome: flagged for investigation')
	expect(open).toContain('Container 2: Does not conform')
	expect(open).toContain(
		`2 ${isomer.fileName} ${isomer.sampleSha256.slice(0, 12)}… Does not conform ${fixed4(isomer.correlation)} ${fixed4(isomer.derivativeCorrelation)}`,
	)
	// The stored correlation of the isomer is below the version's threshold, and both are printed.
	expect(isomer.correlation!).toBeLessThan(run.criteria.minCorrelation)
	expect(open).toContain(`r ≥ ${run.criteria.minCorrelation.toFixed(3)}`)
	// The reasons are printed (wrapped lines come back joined by spaces).
	for (const reason of reasons) expect(open.replace(/\s+/g, '')).toContain(reason.replace(/\s+/g, ''))
	expect(open).toContain('Investigation open')

	await signIdentityRun(db, { actor: s.analyst, runId: flagged.runId, intent: 'sign-performed', now: new Date() })
	await signIdentityRun(db, { actor: s.verifier, runId: flagged.runId, intent: 'verify', now: new Date() })
	const summary = 'Container 2 was sampled from a drum of the wrong isomer; the booth log shows the mix-up.'
	const concluded = await concludeInvestigation(db, {
		actor: s.approver,
		runId: flagged.runId,
		conclusion: 'invalidated',
		summary,
		now: new Date(),
	})
	expect(concluded.ok).toBe(true)
	const lotNumber = flagged.lotNumber
	const retest = await recordIdentityRun(db, {
		kind: 'retest',
		actor: s.analyst,
		retestOfId: flagged.runId,
		reason: 'Container 2 resampled from the right drum after the investigation.',
		instrumentId: s.instrumentId,
		files: containerFiles(lotNumber, [
			{ relPath: REFERENCE, seed: 121 },
			{ relPath: REFERENCE, seed: 122 },
		]),
		now: new Date(),
	})
	if (!retest.ok) throw retest.error

	const closed = (await download(s.approver, flagged.runId)).pages.join(' ')
	expect(closed).toContain(`Investigation concluded`)
	expect(closed).toContain('Invalidated: a laboratory error was assigned, and the retest decides')
	expect(closed).toContain(`by ${s.approver.name}`)
	expect(closed).toContain(summary)
	expect(closed).toContain(`Retested by ${retest.value.runNumber} (Conforms)`)
	expect(closed).not.toContain('NOT VERIFIED')

	const retestText = (await download(s.analyst, retest.value.runId)).pages.join(' ')
	expect(retestText).toContain(`Retest of ${flagged.runNumber}. Reason: Container 2 resampled from the right drum`)
	expect(retestText).toContain('Outcome: conforms')
	expect(retestText).toContain(NOT_VERIFIED)
}, 60_000)

test('[RUN-103] the record is refused to roles without run:read and answers 404 for an unknown run', async () => {
	const s = await lab()
	const recorded = await recordRun(s, [{ relPath: REFERENCE, seed: 131 }])
	const inspector = await makeActor(db, 'inspector')
	expect(await refusal(() => download(inspector, recorded.runId))).toBe(403)
	expect(await refusal(() => download(s.analyst, '00000000-0000-4000-8000-000000000000'))).toBe(404)
	expect(await refusal(() => download(s.analyst, 'not-a-run'))).toBe(404)
	const downloads = await db.select().from(auditEvents).where(eq(auditEvents.action, 'identity-run.record-downloaded'))
	expect(downloads).toHaveLength(0)
})

test('[RUN-104] the dossier with identity runs lists the verified runs against the version, is stored once per set of runs and served byte-identical; the plain dossier is untouched', async () => {
	const s = await lab()
	const first = await recordRun(s, [{ relPath: SAME_MEASUREMENT }, { relPath: REFERENCE, seed: 141 }])
	await signIdentityRun(db, { actor: s.analyst, runId: first.runId, intent: 'sign-performed', now: new Date() })
	await signIdentityRun(db, { actor: s.verifier, runId: first.runId, intent: 'verify', now: new Date() })
	const flagged = await recordRun(s, [{ relPath: REFERENCE, seed: 142 }, { relPath: ISOMER }])
	await signIdentityRun(db, { actor: s.analyst, runId: flagged.runId, intent: 'sign-performed', now: new Date() })
	const firstRun = (await getRun(db, first.runId))!
	const flaggedRun = (await getRun(db, flagged.runId))!

	const plain = await dossierPdf(s.approver, s.version)
	expect(plain.pages.join(' ')).not.toContain('Appendix A')
	const withRuns = await dossierPdf(s.approver, s.version, '?runs=include')
	expect(withRuns.response.headers.get('Content-Disposition')).toContain('-effective-with-runs.pdf')
	const text = withRuns.pages.join(' ')
	expect(text).toContain('1 verified run against this version, listed in Appendix A')
	expect(text).toContain('Appendix A Identity runs against this version')
	// The verified run, with its lowest stored correlation to 4 decimals; the run awaiting verification is left out.
	const lowest = Math.min(...firstRun.containers.map((row) => row.correlation!))
	expect(text).toContain(`${first.runNumber} ${firstRun.run.recordedAt.toISOString().slice(0, 10)} ${first.lotNumber}`)
	expect(text).toContain(`Conforms ${fixed4(lowest)} ${s.verifier.name}`)
	expect(text).toContain(`${firstRun.recordSha256.slice(0, 12)}…`)
	expect(text).not.toContain(flagged.runNumber)
	withRuns.pages.forEach((page, index) => expect(page).toContain(`Page ${index + 1} of ${withRuns.pages.length}`))

	// A second request gets the same bytes (PRODUCT.md §6), and so does the plain dossier.
	const again = await dossierPdf(s.reviewer, s.version, '?runs=include')
	expect(Buffer.from(again.bytes).equals(Buffer.from(withRuns.bytes))).toBe(true)
	const plainAgain = await dossierPdf(s.reviewer, s.version)
	expect(Buffer.from(plainAgain.bytes).equals(Buffer.from(plain.bytes))).toBe(true)
	expect(Buffer.from(plain.bytes).equals(Buffer.from(withRuns.bytes))).toBe(false)

	// Verifying the flagged run changes the set: a new variant is stored, and the earlier copy stays verifiable.
	await signIdentityRun(db, { actor: s.verifier, runId: flagged.runId, intent: 'verify', now: new Date() })
	const grown = await dossierPdf(s.approver, s.version, '?runs=include')
	const grownText = grown.pages.join(' ')
	expect(Buffer.from(grown.bytes).equals(Buffer.from(withRuns.bytes))).toBe(false)
	expect(grownText).toContain('2 verified runs against this version')
	expect(grownText).toContain(first.runNumber)
	expect(grownText).toContain(
		`Flagged for investigation Container 2 not conforming ${fixed4(Math.min(...flaggedRun.containers.map((row) => row.correlation!)))}`,
	)
	expect(grownText.indexOf(first.runNumber)).toBeLessThan(grownText.indexOf(flagged.runNumber))
	const rows = await db.select().from(dossiers).where(eq(dossiers.versionId, s.version.versionId))
	expect(rows.map((row) => row.sha256).sort()).toEqual(
		[plain, withRuns, grown].map((file) => file.response.headers.get('X-Content-SHA256')).sort(),
	)
	expect(rows.filter((row) => row.includedRunsSha256 === null)).toHaveLength(1)
	for (const file of [withRuns, grown]) {
		const hash = file.response.headers.get('X-Content-SHA256')!
		expect(identifyDossier(await listDossierRecords(db, hash), hash)).toMatchObject({ status: 'match' })
	}
	const downloads = await db
		.select()
		.from(auditEvents)
		.where(and(eq(auditEvents.entityId, s.version.versionId), eq(auditEvents.action, 'dossier.downloaded')))
		.orderBy(auditEvents.id)
	expect(downloads.map((event) => (event.after as { includedRuns?: number }).includedRuns ?? null)).toEqual([
		null,
		1,
		1,
		null,
		2,
	])
	expect(await refusal(() => dossierPdf(s.approver, s.version, '?runs=all'))).toBe(400)
}, 90_000)
