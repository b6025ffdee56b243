import { alias } from 'drizzle-orm/pg-core'
import { and, asc, desc, eq, inArray } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import {
	identityRuns,
	instrumentChecks,
	instruments,
	lots,
	runContainers,
	runSignatures,
} from '#app/.server/db/schema/runs.ts'
import { specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { parseContent } from '#app/.server/services/specifications.ts'
import { lotDisposition, type RunSnapshot } from '#shared/runs/run-rules.ts'

const recorder = alias(users, 'recorder')
const closer = alias(users, 'closer')

const runColumns = {
	id: identityRuns.id,
	runNumber: identityRuns.runNumber,
	lotId: identityRuns.lotId,
	state: identityRuns.state,
	outcome: identityRuns.outcome,
	retestOfId: identityRuns.retestOfId,
	retestReason: identityRuns.retestReason,
	recordedAt: identityRuns.recordedAt,
	recordedBy: identityRuns.recordedBy,
	recordedByName: recorder.name,
	investigationConclusion: identityRuns.investigationConclusion,
	investigationSummary: identityRuns.investigationSummary,
	investigationClosedAt: identityRuns.investigationClosedAt,
	investigationClosedByName: closer.name,
	instrumentCode: instruments.code,
	documentNumber: specifications.documentNumber,
	versionNumber: specVersions.versionNumber,
}

function runsQuery(db: Db) {
	return db
		.select(runColumns)
		.from(identityRuns)
		.innerJoin(recorder, eq(recorder.id, identityRuns.recordedBy))
		.leftJoin(closer, eq(closer.id, identityRuns.investigationClosedBy))
		.innerJoin(instruments, eq(instruments.id, identityRuns.instrumentId))
		.innerJoin(specifications, eq(specifications.id, identityRuns.specificationId))
		.innerJoin(specVersions, eq(specVersions.id, identityRuns.versionId))
}

/** Every lot (newest first) with its material, its runs' count and its disposition. */
export async function listLots(db: Db, filter: { materialId?: string | null } = {}) {
	const rows = await db
		.select({ lot: lots, materialName: materials.name, materialCode: materials.code })
		.from(lots)
		.innerJoin(materials, eq(materials.id, lots.materialId))
		.where(filter.materialId ? eq(lots.materialId, filter.materialId) : undefined)
		.orderBy(desc(lots.createdAt))
	const ids = rows.map((row) => row.lot.id)
	const runs = ids.length
		? await db
				.select({
					lotId: identityRuns.lotId,
					state: identityRuns.state,
					outcome: identityRuns.outcome,
					investigationConclusion: identityRuns.investigationConclusion,
					recordedAt: identityRuns.recordedAt,
				})
				.from(identityRuns)
				.where(inArray(identityRuns.lotId, ids))
		: []
	return rows.map((row) => {
		const own = runs.filter((run) => run.lotId === row.lot.id)
		return {
			...row.lot,
			materialName: row.materialName,
			materialCode: row.materialCode,
			runCount: own.length,
			lastRunAt: own.reduce<Date | null>(
				(latest, run) => (!latest || run.recordedAt > latest ? run.recordedAt : latest),
				null,
			),
			disposition: lotDisposition(own),
		}
	})
}

/** One lot with its material and all its runs (oldest first), or null. */
export async function getLot(db: Db, lotId: string) {
	const [row] = await db
		.select({ lot: lots, material: materials, createdByName: users.name })
		.from(lots)
		.innerJoin(materials, eq(materials.id, lots.materialId))
		.innerJoin(users, eq(users.id, lots.createdBy))
		.where(eq(lots.id, lotId))
	if (!row) return null
	const runs = await runsQuery(db).where(eq(identityRuns.lotId, lotId)).orderBy(asc(identityRuns.recordedAt))
	return { ...row, runs, disposition: lotDisposition(runs) }
}

/**
 * Everything a run record shows: lot, specification, instrument check, containers with evidence, signatures, links.
 * `containerNumber` loads that one container only (the container page), not every container of the run.
 */
export async function getRun(db: Db, runId: string, options: { containerNumber?: number } = {}) {
	const [run] = await runsQuery(db).where(eq(identityRuns.id, runId))
	if (!run) return null
	const [context] = await db
		.select({
			lot: lots,
			material: materials,
			specificationId: specifications.id,
			specificationTitle: specifications.title,
			versionId: specVersions.id,
			versionContent: specVersions.content,
			versionSha256: specVersions.contentSha256,
			instrument: instruments,
			check: {
				id: instrumentChecks.id,
				passed: instrumentChecks.passed,
				performedAt: instrumentChecks.performedAt,
				validUntil: instrumentChecks.validUntil,
			},
			recordSha256: identityRuns.recordSha256,
		})
		.from(identityRuns)
		.innerJoin(lots, eq(lots.id, identityRuns.lotId))
		.innerJoin(materials, eq(materials.id, lots.materialId))
		.innerJoin(specifications, eq(specifications.id, identityRuns.specificationId))
		.innerJoin(specVersions, eq(specVersions.id, identityRuns.versionId))
		.innerJoin(instruments, eq(instruments.id, identityRuns.instrumentId))
		.innerJoin(instrumentChecks, eq(instrumentChecks.id, identityRuns.instrumentCheckId))
		.where(eq(identityRuns.id, runId))
	if (!context) return null
	const containers = await db
		.select({
			id: runContainers.id,
			containerNumber: runContainers.containerNumber,
			spectrumId: runContainers.spectrumId,
			fileName: spectra.fileName,
			sampleSha256: spectra.sha256,
			verdict: runContainers.verdict,
			correlation: runContainers.correlation,
			derivativeCorrelation: runContainers.derivativeCorrelation,
			result: runContainers.result,
			algorithmVersion: runContainers.algorithmVersion,
		})
		.from(runContainers)
		.innerJoin(spectra, eq(spectra.id, runContainers.spectrumId))
		.where(
			and(
				eq(runContainers.runId, runId),
				options.containerNumber === undefined ? undefined : eq(runContainers.containerNumber, options.containerNumber),
			),
		)
		.orderBy(asc(runContainers.containerNumber))
	const signatures = await db
		.select()
		.from(runSignatures)
		.where(eq(runSignatures.runId, runId))
		.orderBy(asc(runSignatures.signedAt))
	const retests = await db
		.select({
			id: identityRuns.id,
			runNumber: identityRuns.runNumber,
			outcome: identityRuns.outcome,
			state: identityRuns.state,
		})
		.from(identityRuns)
		.where(eq(identityRuns.retestOfId, runId))
		.orderBy(asc(identityRuns.recordedAt))
	const [retestOf] = run.retestOfId
		? await db
				.select({ id: identityRuns.id, runNumber: identityRuns.runNumber })
				.from(identityRuns)
				.where(eq(identityRuns.id, run.retestOfId))
		: []
	const content = parseContent(context.versionContent)
	const { versionContent: _content, ...rest } = context
	return {
		run,
		...rest,
		criteria: content.criteria,
		referenceSpectrumId: content.referenceSpectrumId,
		containers,
		signatures,
		retests,
		retestOf: retestOf ?? null,
		/** The rules' view of the run (shared/runs/run-rules.ts), for deciding what a person may do on it. */
		snapshot: {
			state: run.state,
			outcome: run.outcome,
			recordedBy: run.recordedBy,
			performedBy: signatures.find((row) => row.meaning === 'performed')?.signerId ?? null,
			investigationConclusion: run.investigationConclusion,
		} satisfies RunSnapshot,
	}
}

/** The runs of a specification's versions that a dossier may include: verified runs, oldest first. */
export async function verifiedRunsForSpecification(db: Db, specificationId: string) {
	return runsQuery(db)
		.where(and(eq(identityRuns.specificationId, specificationId), eq(identityRuns.state, 'verified')))
		.orderBy(asc(identityRuns.recordedAt))
}

/**
 * Every container correlation of a material's runs over time (oldest first, then by container), with what may
 * explain a drift (supplier, instrument, lot) and the threshold of the specification version the run was judged
 * against.
 */
export async function trendPoints(db: Db, materialId: string) {
	const rows = await db
		.select({
			runId: identityRuns.id,
			runNumber: identityRuns.runNumber,
			recordedAt: identityRuns.recordedAt,
			lotNumber: lots.lotNumber,
			supplier: lots.supplier,
			instrumentCode: instruments.code,
			containerNumber: runContainers.containerNumber,
			verdict: runContainers.verdict,
			correlation: runContainers.correlation,
			documentNumber: specifications.documentNumber,
			versionId: specVersions.id,
			versionNumber: specVersions.versionNumber,
			versionContent: specVersions.content,
		})
		.from(runContainers)
		.innerJoin(identityRuns, eq(identityRuns.id, runContainers.runId))
		.innerJoin(lots, eq(lots.id, identityRuns.lotId))
		.innerJoin(instruments, eq(instruments.id, identityRuns.instrumentId))
		.innerJoin(specifications, eq(specifications.id, identityRuns.specificationId))
		.innerJoin(specVersions, eq(specVersions.id, identityRuns.versionId))
		.where(eq(lots.materialId, materialId))
		.orderBy(asc(identityRuns.recordedAt), asc(runContainers.containerNumber))
	// NOTE: keyed by version id: version numbers restart in each specification, and a material may have several.
	const thresholds = new Map<string, number>()
	return rows.map(({ versionContent, ...row }) => {
		if (!thresholds.has(row.versionId))
			thresholds.set(row.versionId, parseContent(versionContent).criteria.minCorrelation)
		return { ...row, threshold: thresholds.get(row.versionId)! }
	})
}

/** Materials that have at least one lot, for the trends picker. */
export async function materialsWithLots(db: Db) {
	return db
		.selectDistinct({ id: materials.id, code: materials.code, name: materials.name })
		.from(materials)
		.innerJoin(lots, eq(lots.materialId, materials.id))
		.orderBy(asc(materials.code))
}
