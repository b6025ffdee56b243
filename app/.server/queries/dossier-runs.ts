import { alias } from 'drizzle-orm/pg-core'
import { and, asc, eq, inArray } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { identityRuns, instruments, lots, runContainers, runSignatures } from '#app/.server/db/schema/runs.ts'
import type { DossierRun } from '#shared/dossier/model.ts'

const original = alias(identityRuns, 'original')

/**
 * The verified identity runs that tested against one specification version, oldest first, as the dossier's
 * appendix lists them. Plain JSON values only: their canonical form keys the stored variant of the dossier.
 */
export async function listDossierRuns(db: Db, versionId: string): Promise<Array<DossierRun>> {
	const runs = await db
		.select({
			id: identityRuns.id,
			runNumber: identityRuns.runNumber,
			recordedAt: identityRuns.recordedAt,
			outcome: identityRuns.outcome,
			investigationConclusion: identityRuns.investigationConclusion,
			recordSha256: identityRuns.recordSha256,
			lotNumber: lots.lotNumber,
			supplier: lots.supplier,
			instrumentCode: instruments.code,
			retestOf: original.runNumber,
		})
		.from(identityRuns)
		.innerJoin(lots, eq(lots.id, identityRuns.lotId))
		.innerJoin(instruments, eq(instruments.id, identityRuns.instrumentId))
		.leftJoin(original, eq(original.id, identityRuns.retestOfId))
		.where(and(eq(identityRuns.versionId, versionId), eq(identityRuns.state, 'verified')))
		.orderBy(asc(identityRuns.recordedAt), asc(identityRuns.runNumber))
	if (runs.length === 0) return []
	const ids = runs.map((run) => run.id)
	const [containers, verifications] = await Promise.all([
		db
			.select({
				runId: runContainers.runId,
				containerNumber: runContainers.containerNumber,
				verdict: runContainers.verdict,
				correlation: runContainers.correlation,
			})
			.from(runContainers)
			.where(inArray(runContainers.runId, ids))
			.orderBy(asc(runContainers.containerNumber)),
		db
			.select({ runId: runSignatures.runId, printedName: runSignatures.printedName, signedAt: runSignatures.signedAt })
			.from(runSignatures)
			.where(and(inArray(runSignatures.runId, ids), eq(runSignatures.meaning, 'verified'))),
	])
	return runs.map((run) => {
		const own = containers.filter((row) => row.runId === run.id)
		const correlations = own.flatMap((row) => (row.correlation === null ? [] : [row.correlation]))
		const verification = verifications.find((row) => row.runId === run.id)
		if (!verification) throw new Error(`verified run ${run.runNumber} has no verification signature`)
		return {
			runNumber: run.runNumber,
			lotNumber: run.lotNumber,
			supplier: run.supplier,
			containerCount: own.length,
			instrumentCode: run.instrumentCode,
			recordedAt: run.recordedAt.toISOString(),
			outcome: run.outcome,
			investigationConclusion: run.investigationConclusion,
			lowestCorrelation: correlations.length > 0 ? Math.min(...correlations) : null,
			notConforming: own.filter((row) => row.verdict !== 'conforms').map((row) => row.containerNumber),
			verifiedBy: verification.printedName,
			verifiedAtUtc: verification.signedAt.toISOString(),
			retestOf: run.retestOf,
			recordSha256: run.recordSha256,
		}
	})
}
