import { and, asc, eq, inArray, sql } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { identityRuns, lots, runContainers, runSignatures } from '#app/.server/db/schema/runs.ts'
import { specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { instrumentWithReadiness } from '#app/.server/services/instruments.ts'
import { parseContent } from '#app/.server/services/specifications.ts'
import { insertSpectra, loadSpectrum, MAX_SPECTRUM_FILE_BYTES, sha256Hex } from '#app/.server/services/spectra.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { Conflict, DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'
import { describeMappingProblem, mapFilesToContainers } from '#shared/runs/container-mapping.ts'
import { runRecordHash } from '#shared/runs/run-record.ts'
import {
	decideRetest,
	decideRunStep,
	type InvestigationConclusion,
	runOutcome,
	type RunSnapshot,
	runSignatureStatement,
} from '#shared/runs/run-rules.ts'
import { compareSpectra } from '#shared/spectra/compare.ts'
import { AcceptanceCriteriaSchema } from '#shared/spectra/criteria.ts'
import { importSpectrum } from '#shared/spectra/import.ts'
import { toAcceptanceCriteria } from '#shared/specs/version-content.ts'

/** A refused run with one plain line per problem (which file, which container), so the form can list them all. */
/** Every line a refusal of a run should show: its message, then each problem (file, container) it names. */
export function refusalLines(error: DomainError): Array<string> {
	return [error.message, ...(error instanceof RunInputRefused ? error.problems : [])]
}

export class RunInputRefused extends DomainError {
	constructor(
		message: string,
		readonly problems: ReadonlyArray<string>,
	) {
		super(message, 422)
	}
}

export type SampleFile = { fileName: string; bytes: Uint8Array }

type LotInput = { lotNumber: string; supplier: string; containerCount: number; receivedOn: string | null }

export type RecordRunInput = {
	actor: Actor
	instrumentId: string
	files: ReadonlyArray<SampleFile>
	/** fileIndex → container number, where the analyst corrected the guess from the file name. */
	overrides?: Readonly<Record<number, number>>
	now: Date
} & ({ kind: 'first'; specificationId: string; lot: LotInput } | { kind: 'retest'; retestOfId: string; reason: string })

/** The specification's effective version with its parsed content, reference spectrum and criteria. */
async function effectiveBasis(db: Db, specificationId: string) {
	const [row] = await db
		.select({ version: specVersions, specification: specifications, material: materials })
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.where(and(eq(specVersions.specificationId, specificationId), eq(specVersions.state, 'effective')))
	return row ?? null
}

/**
 * Records an identity run: checks the instrument is usable now, maps every file to its container, imports and
 * compares each sample with the effective version's reference under its criteria, and stores the lot (first run),
 * the frozen sample spectra, the run with its outcome and record hash, its container results and the audit events
 * in one transaction. Anything wrong refuses the whole run with every reason and stores nothing.
 */
export async function recordIdentityRun(
	db: Db,
	input: RecordRunInput,
): Promise<Result<{ runId: string; runNumber: string; outcome: 'conforms' | 'flagged' }, DomainError>> {
	// What the run is about: a new lot under a specification, or a retest of a flagged run on the same lot.
	let specificationId: string
	let lot: LotInput & { id: string | null }
	let original: (typeof identityRuns.$inferSelect & { performedBy: string | null }) | null = null
	if (input.kind === 'first') {
		specificationId = input.specificationId
		lot = { ...input.lot, id: null }
	} else {
		const [row] = await db
			.select({ run: identityRuns, lot: lots })
			.from(identityRuns)
			.innerJoin(lots, eq(lots.id, identityRuns.lotId))
			.where(eq(identityRuns.id, input.retestOfId))
		if (!row) return err(new NotFound('The run to retest'))
		original = { ...row.run, performedBy: null }
		const allowed = decideRetest(snapshotOf(original), input.reason)
		if (!allowed.ok) return allowed
		specificationId = row.run.specificationId
		lot = { ...row.lot, id: row.lot.id }
	}
	const retestReason = input.kind === 'retest' ? input.reason.trim() : null
	const basis = await effectiveBasis(db, specificationId)
	if (!basis) {
		return err(
			new Conflict(
				'This specification has no effective version; identity runs test against an effective version only.',
			),
		)
	}
	// The cheap refusal first: a lot recorded before is tested again only through a retest of its flagged run.
	if (!lot.id && (await lotRecorded(db, basis.material.id, lot))) return err(lotTaken(lot))
	const content = parseContent(basis.version.content)
	if (!content.referenceSpectrumId) return err(new Conflict('The effective version has no reference spectrum.'))

	const instrument = await instrumentWithReadiness(db, input.instrumentId, input.now)
	if (!instrument) return err(new NotFound('The instrument'))
	if (!instrument.readiness.usable || !instrument.readiness.check) {
		return err(new DomainError(instrument.readiness.message, 409))
	}
	const check = instrument.readiness.check

	const mapping = mapFilesToContainers(
		input.files.map((file) => file.fileName),
		lot.containerCount,
		input.overrides,
	)
	if (!mapping.complete) {
		return err(
			new RunInputRefused(
				`Every container needs exactly one spectrum; nothing was recorded.`,
				mapping.problems.map(describeMappingProblem),
			),
		)
	}

	// Read every file first; a single unreadable or reused file refuses the run.
	const problems: Array<string> = []
	const hashes = input.files.map((file) => sha256Hex(file.bytes))
	const seen = new Map<string, string>()
	input.files.forEach((file, index) => {
		const earlier = seen.get(hashes[index]!)
		if (earlier)
			problems.push(`${file.fileName} has the same bytes as ${earlier}; each container needs its own measurement.`)
		else seen.set(hashes[index]!, file.fileName)
	})
	const stored = await db
		.select({ sha256: spectra.sha256, fileName: spectra.fileName })
		.from(spectra)
		.where(inArray(spectra.sha256, hashes))
	for (const row of stored) {
		const file = input.files[hashes.indexOf(row.sha256)]!
		problems.push(
			`${file.fileName} is already stored (as ${row.fileName}); a sample spectrum is used once, for one container.`,
		)
	}
	const imported = input.files.map((file) =>
		importSpectrum(file.bytes, { fileName: file.fileName, maxBytes: MAX_SPECTRUM_FILE_BYTES }),
	)
	imported.forEach((result, index) => {
		if (!result.ok) problems.push(`${input.files[index]!.fileName}: ${result.error.message}`)
	})
	if (problems.length > 0) return err(new RunInputRefused('Some files cannot be used; nothing was recorded.', problems))

	const reference = await loadSpectrum(db, content.referenceSpectrumId)
	if (!reference) return err(new NotFound('The reference spectrum'))
	const criteria = AcceptanceCriteriaSchema.parse(toAcceptanceCriteria(content))
	const containers = mapping.assignments
		.map((assignment) => {
			const parsed = imported[assignment.fileIndex]!
			if (!parsed.ok) throw new Error('unreachable: import failures were refused above')
			return {
				container: assignment.container!,
				file: input.files[assignment.fileIndex]!,
				sha256: hashes[assignment.fileIndex]!,
				imported: parsed.value,
				comparison: compareSpectra(reference.spectrum, parsed.value.spectrum, criteria),
			}
		})
		.sort((a, b) => a.container - b.container)
	const outcome = runOutcome(containers.map((row) => row.comparison.verdict))

	const recorded = db.transaction(async (tx) => {
		let lotId = lot.id
		if (!lotId) {
			// Checked again here: someone may have recorded the same lot since the check above.
			if (await lotRecorded(tx, basis.material.id, lot)) return err(lotTaken(lot))
			const [created] = await tx
				.insert(lots)
				.values({
					materialId: basis.material.id,
					lotNumber: lot.lotNumber,
					supplier: lot.supplier,
					containerCount: lot.containerCount,
					receivedOn: lot.receivedOn,
					createdBy: input.actor.id,
					createdAt: input.now,
				})
				.returning({ id: lots.id })
			lotId = created!.id
			await recordAudit(tx, {
				actor: { id: input.actor.id, label: input.actor.email },
				action: 'lot.recorded',
				entityType: 'lot',
				entityId: lotId,
				after: {
					lotNumber: lot.lotNumber,
					supplier: lot.supplier,
					containerCount: lot.containerCount,
					material: basis.material.code,
				},
				occurredAt: input.now,
			})
		}
		const runNumber = await nextRunNumber(tx, input.now)
		// One INSERT for all the sample spectra (and one for their audit events), not a round trip each: a 100-container
		// lot is committed in well under a second (npm run bench).
		const spectrumIds = await insertSpectra(
			tx,
			containers.map((row) => ({
				actor: input.actor,
				fileName: row.file.fileName,
				bytes: row.file.bytes,
				sha256: row.sha256,
				imported: row.imported,
				metadata: {
					purpose: 'sample' as const,
					materialId: basis.material.id,
					technique: null,
					instrument: instrument.instrument.code,
					resolution: null,
					acquiredOn: input.now.toISOString().slice(0, 10),
					referenceStandardName: null,
					referenceStandardLot: null,
					notes: `Lot ${lot.lotNumber}, container ${row.container} (${runNumber})`,
				},
				now: input.now,
				lockedAt: input.now,
			})),
		)
		const taken = containers.find((_, index) => !spectrumIds[index])
		// Thrown, not returned: returning from the callback would commit the lot and the other spectra.
		if (taken) throw new StoredMeanwhile(taken.file.fileName)
		const recordSha256 = await runRecordHash({
			runNumber,
			material: { code: basis.material.code, name: basis.material.name },
			lot: {
				lotNumber: lot.lotNumber,
				supplier: lot.supplier,
				containerCount: lot.containerCount,
				receivedOn: lot.receivedOn,
			},
			specification: {
				documentNumber: basis.specification.documentNumber,
				versionNumber: basis.version.versionNumber,
				contentSha256: basis.version.contentSha256,
			},
			instrument: {
				code: instrument.instrument.code,
				checkId: check.id,
				checkPerformedAt: check.performedAt.toISOString(),
				checkValidUntil: check.validUntil.toISOString(),
			},
			retestOf: original?.runNumber ?? null,
			retestReason,
			recordedBy: input.actor.email,
			recordedAt: input.now.toISOString(),
			containers: containers.map((row) => ({
				container: row.container,
				sampleSha256: row.sha256,
				sampleFileName: row.file.fileName,
				verdict: row.comparison.verdict,
				correlation: row.comparison.correlation,
				derivativeCorrelation: row.comparison.derivativeCorrelation,
				algorithmVersion: row.comparison.algorithmVersion,
			})),
			outcome,
		})
		const [run] = await tx
			.insert(identityRuns)
			.values({
				runNumber,
				lotId,
				specificationId,
				versionId: basis.version.id,
				instrumentId: instrument.instrument.id,
				instrumentCheckId: check.id,
				retestOfId: original?.id ?? null,
				retestReason,
				outcome,
				recordSha256,
				recordedBy: input.actor.id,
				recordedAt: input.now,
			})
			.returning({ id: identityRuns.id })
		await tx.insert(runContainers).values(
			containers.map((row, index) => ({
				runId: run!.id,
				containerNumber: row.container,
				spectrumId: spectrumIds[index]!,
				verdict: row.comparison.verdict,
				correlation: row.comparison.correlation,
				derivativeCorrelation: row.comparison.derivativeCorrelation,
				result: row.comparison,
				algorithmVersion: row.comparison.algorithmVersion,
			})),
		)
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: outcome === 'flagged' ? 'identity-run.flagged' : 'identity-run.recorded',
			entityType: 'identity-run',
			entityId: run!.id,
			after: {
				runNumber,
				lotNumber: lot.lotNumber,
				containers: containers.length,
				outcome,
				notConforming: containers.filter((row) => row.comparison.verdict !== 'conforms').map((row) => row.container),
				instrument: instrument.instrument.code,
				specification: `${basis.specification.documentNumber} v${basis.version.versionNumber}`,
				recordSha256,
				...(original ? { retestOf: original.runNumber } : {}),
			},
			reason: retestReason,
			occurredAt: input.now,
		})
		return ok({ runId: run!.id, runNumber, outcome })
	})
	return recorded.catch((error: unknown) => {
		if (!(error instanceof StoredMeanwhile)) throw error
		return err(new Conflict(`${error.fileName} was stored by someone else just now; nothing was recorded.`))
	})
}

async function lotRecorded(db: Db, materialId: string, lot: Pick<LotInput, 'supplier' | 'lotNumber'>) {
	const [row] = await db
		.select({ id: lots.id })
		.from(lots)
		.where(and(eq(lots.materialId, materialId), eq(lots.supplier, lot.supplier), eq(lots.lotNumber, lot.lotNumber)))
	return Boolean(row)
}

function lotTaken(lot: Pick<LotInput, 'supplier' | 'lotNumber'>) {
	return new Conflict(
		`Lot ${lot.lotNumber} from ${lot.supplier} is already recorded for this material. Open it to see its runs; a retest starts from a flagged run.`,
	)
}

/** Thrown inside a run's transaction to roll it back when a sample's bytes were stored by someone else meanwhile. */
class StoredMeanwhile extends Error {
	constructor(readonly fileName: string) {
		super(`${fileName} was stored meanwhile`)
	}
}

/** 'IDR-2026-0001', …: numbered per calendar year (UTC), drawn under a transaction-scoped advisory lock. */
async function nextRunNumber(tx: Db, now: Date): Promise<string> {
	const prefix = `IDR-${now.getUTCFullYear()}-`
	await tx.execute(sql`select pg_advisory_xact_lock(hashtext('bandproof.identity-run-number'))`)
	const [row] = await tx
		.select({ count: sql<number>`count(*)::int` })
		.from(identityRuns)
		.where(sql`${identityRuns.runNumber} like ${`${prefix}%`}`)
	return `${prefix}${String((row?.count ?? 0) + 1).padStart(4, '0')}`
}

function snapshotOf(run: typeof identityRuns.$inferSelect & { performedBy: string | null }): RunSnapshot {
	return {
		state: run.state,
		outcome: run.outcome,
		recordedBy: run.recordedBy,
		performedBy: run.performedBy,
		investigationConclusion: run.investigationConclusion,
	}
}

async function loadRunForUpdate(tx: Db, runId: string) {
	const [row] = await tx
		.select({ run: identityRuns, lot: lots, material: materials })
		.from(identityRuns)
		.innerJoin(lots, eq(lots.id, identityRuns.lotId))
		.innerJoin(materials, eq(materials.id, lots.materialId))
		.where(eq(identityRuns.id, runId))
		.for('update', { of: identityRuns })
	if (!row) return null
	const [performed] = await tx
		.select({ signerId: runSignatures.signerId })
		.from(runSignatures)
		.where(and(eq(runSignatures.runId, runId), eq(runSignatures.meaning, 'performed')))
	return { ...row, snapshot: snapshotOf({ ...row.run, performedBy: performed?.signerId ?? null }) }
}

/**
 * Signs a run as performed (the analyst) or as verified (a second person). The caller has re-authenticated the
 * signer. The signature is bound to the run's record hash; signature, state and audit event share one transaction.
 */
export async function signIdentityRun(
	db: Db,
	input: { actor: Actor; runId: string; intent: 'sign-performed' | 'verify'; now: Date },
): Promise<Result<{ state: string }, DomainError>> {
	return db.transaction(async (tx) => {
		const loaded = await loadRunForUpdate(tx, input.runId)
		if (!loaded) return err(new NotFound('The identity run'))
		const step = decideRunStep(loaded.snapshot, { type: input.intent }, input.actor)
		if (!step.ok) return step
		const [signer] = await tx.select().from(users).where(eq(users.id, input.actor.id))
		if (!signer) throw new Error('a signature needs a signing user')
		const meaning = step.value.signature!
		await tx.insert(runSignatures).values({
			runId: loaded.run.id,
			signerId: signer.id,
			printedName: signer.name,
			meaning,
			statement: runSignatureStatement(meaning, {
				runNumber: loaded.run.runNumber,
				lotNumber: loaded.lot.lotNumber,
				materialName: loaded.material.name,
				printedName: signer.name,
				recordSha256: loaded.run.recordSha256,
			}),
			signedAt: input.now,
			signerTimeZone: signer.timeZone,
			recordSha256: loaded.run.recordSha256,
			authentication: 'password re-entered at signing',
		})
		await tx.update(identityRuns).set({ state: step.value.next }).where(eq(identityRuns.id, loaded.run.id))
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: meaning === 'performed' ? 'identity-run.signed' : 'identity-run.verified',
			entityType: 'identity-run',
			entityId: loaded.run.id,
			before: { state: loaded.run.state },
			after: { state: step.value.next, signature: meaning, recordSha256: loaded.run.recordSha256 },
			occurredAt: input.now,
		})
		return ok({ state: step.value.next })
	})
}

/** An approver concludes the investigation of a flagged, verified run (re-authenticated by the caller). */
export async function concludeInvestigation(
	db: Db,
	input: { actor: Actor; runId: string; conclusion: InvestigationConclusion; summary: string; now: Date },
): Promise<Result<{ conclusion: InvestigationConclusion }, DomainError>> {
	return db.transaction(async (tx) => {
		const loaded = await loadRunForUpdate(tx, input.runId)
		if (!loaded) return err(new NotFound('The identity run'))
		const step = decideRunStep(
			loaded.snapshot,
			{ type: 'close-investigation', conclusion: input.conclusion, summary: input.summary },
			input.actor,
		)
		if (!step.ok) return step
		await tx
			.update(identityRuns)
			.set({
				investigationConclusion: input.conclusion,
				investigationSummary: input.summary.trim(),
				investigationClosedBy: input.actor.id,
				investigationClosedAt: input.now,
			})
			.where(eq(identityRuns.id, loaded.run.id))
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: 'identity-run.investigation-concluded',
			entityType: 'identity-run',
			entityId: loaded.run.id,
			after: { conclusion: input.conclusion, runNumber: loaded.run.runNumber },
			reason: input.summary.trim(),
			occurredAt: input.now,
		})
		return ok({ conclusion: input.conclusion })
	})
}

/** Specifications that have an effective version with a reference spectrum: what a run can test against. */
export async function listTestableSpecifications(db: Db) {
	const rows = await db
		.select({
			id: specifications.id,
			documentNumber: specifications.documentNumber,
			title: specifications.title,
			materialName: materials.name,
			materialCode: materials.code,
			versionNumber: specVersions.versionNumber,
			content: specVersions.content,
		})
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.where(eq(specVersions.state, 'effective'))
		.orderBy(asc(specifications.documentNumber))
	return rows.filter((row) => parseContent(row.content).referenceSpectrumId).map(({ content: _content, ...row }) => row)
}
