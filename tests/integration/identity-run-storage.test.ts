/**
 * How a run stores its sample spectra: all of them in one INSERT with one audit event each (the hash chain intact),
 * and nothing at all when another run stored the same bytes first. Samples are replicates of a real spectrum of the
 * shared set (4-chloroaniline, PE 1000, SOURCES.md); the instrument check uses a replicate of the real PE 1600
 * polystyrene film, which passes the Ph. Eur. FT table (SOURCES.md).
 */
import { and, count, eq, inArray } from 'drizzle-orm'
import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { identityRuns, lots } from '#app/.server/db/schema/runs.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { verifyAuditChain } from '#app/.server/queries/audit-chain.ts'
import { recordIdentityRun } from '#app/.server/services/identity-runs.ts'
import { containerFiles } from '#tests/support/container-samples.ts'
import { WORKFLOW_REFERENCE_FILE } from '#tests/support/factories.ts'
import { makeReleaseLab } from '#tests/support/release-lab.ts'

/** An effective specification and an instrument with a passing check (tests/support/release-lab.ts). */
async function lab() {
	const { analyst, version, instrumentId, check } = await makeReleaseLab()
	if (!check?.passed) throw new Error('the test instrument check did not pass')
	const run = (lotNumber: string, files: Array<{ fileName: string; bytes: Uint8Array }>) =>
		recordIdentityRun(db, {
			kind: 'first',
			actor: analyst,
			specificationId: version.specificationId,
			lot: { lotNumber, supplier: 'Northbridge Fine Chemicals', containerCount: files.length, receivedOn: null },
			instrumentId,
			files,
			now: new Date(),
		})
	return { run }
}

const samples = (lotNumber: string, firstSeed: number, n: number) =>
	containerFiles(
		lotNumber,
		Array.from({ length: n }, (_, index) => ({ relPath: WORKFLOW_REFERENCE_FILE, seed: firstSeed + index })),
	)

test('[RUN-STORE-001] a 12-container run stores 12 locked sample spectra, each with its own audit event, and the chain holds', async () => {
	const { run } = await lab()
	const files = samples('L-STORE-1', 300, 12)
	const recorded = await run('L-STORE-1', files)
	if (!recorded.ok) throw recorded.error
	expect(recorded.value.outcome).toBe('conforms')
	const stored = await db
		.select({ id: spectra.id, fileName: spectra.fileName, lockedAt: spectra.lockedAt, purpose: spectra.purpose })
		.from(spectra)
		.where(
			inArray(
				spectra.fileName,
				files.map((file) => file.fileName),
			),
		)
	expect(stored.map((row) => row.fileName).sort()).toEqual(files.map((file) => file.fileName).sort())
	for (const row of stored) {
		expect(row.purpose).toBe('sample')
		expect(row.lockedAt).not.toBeNull()
	}
	const events = await db
		.select({ entityId: auditEvents.entityId })
		.from(auditEvents)
		.where(
			and(
				eq(auditEvents.action, 'spectrum.uploaded'),
				inArray(
					auditEvents.entityId,
					stored.map((row) => row.id),
				),
			),
		)
	expect(events.map((event) => event.entityId).sort()).toEqual(stored.map((row) => row.id).sort())
	// The chain trigger runs row by row inside the one INSERT; every link must still match (migration 0003).
	const chain = await verifyAuditChain(db)
	expect(chain.checked).toBeGreaterThan(12)
	expect(chain.breaks).toEqual([])
})

test('[RUN-STORE-002] two runs uploading the same files at once: one is recorded, the other leaves no lot and no spectra', async () => {
	const { run } = await lab()
	const files = samples('L-SAME', 400, 6)
	const outcomes = await Promise.all([run('L-RACE-A', files), run('L-RACE-B', files)])
	const recorded = outcomes.filter((outcome) => outcome.ok)
	const refused = outcomes.filter((outcome) => !outcome.ok)
	expect(recorded).toHaveLength(1)
	expect(refused).toHaveLength(1)
	// Refused before writing (the bytes were already stored, 422) or inside the transaction, which rolls back (409).
	if (!refused[0]!.ok) expect([409, 422]).toContain(refused[0]!.error.status)
	const [lotRows] = await db
		.select({ n: count() })
		.from(lots)
		.where(inArray(lots.lotNumber, ['L-RACE-A', 'L-RACE-B']))
	expect(lotRows!.n).toBe(1)
	const [runRows] = await db.select({ n: count() }).from(identityRuns)
	expect(runRows!.n).toBe(1)
	const [spectrumRows] = await db
		.select({ n: count() })
		.from(spectra)
		.where(
			inArray(
				spectra.fileName,
				files.map((file) => file.fileName),
			),
		)
	expect(spectrumRows!.n).toBe(6)
	expect((await verifyAuditChain(db)).breaks).toEqual([])
})
