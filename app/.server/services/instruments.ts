import { desc, eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { instrumentChecks, instruments } from '#app/.server/db/schema/runs.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { insertSpectrum, MAX_SPECTRUM_FILE_BYTES, sha256Hex } from '#app/.server/services/spectra.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { Conflict, DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'
import type { InstrumentFormValues } from '#shared/runs/forms.ts'
import { type CheckSummary, checkValidUntil, instrumentReadiness } from '#shared/runs/instrument-readiness.ts'
import { importSpectrum } from '#shared/spectra/import.ts'
import { checkPolystyrene, type PolystyreneCheck, type PolystyreneTable } from '#shared/spectra/polystyrene.ts'

/** Registers an instrument, with its audit event. */
export async function registerInstrument(
	db: Db,
	input: { actor: Actor; values: InstrumentFormValues; now: Date },
): Promise<Result<{ id: string }, DomainError>> {
	return db.transaction(async (tx) => {
		const [taken] = await tx
			.select({ id: instruments.id })
			.from(instruments)
			.where(eq(instruments.code, input.values.code))
		if (taken) return err(new Conflict(`The code ${input.values.code} is already used by another instrument.`))
		const [row] = await tx
			.insert(instruments)
			.values({ ...input.values, createdBy: input.actor.id, createdAt: input.now })
			.returning({ id: instruments.id })
		if (!row) throw new Error('instrument insert returned no row')
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: 'instrument.registered',
			entityType: 'instrument',
			entityId: row.id,
			after: { ...input.values },
			occurredAt: input.now,
		})
		return ok({ id: row.id })
	})
}

/** The latest check of an instrument (any outcome), as the readiness rule needs it. */
export async function latestCheck(db: Db, instrumentId: string): Promise<CheckSummary | null> {
	const [row] = await db
		.select({
			id: instrumentChecks.id,
			passed: instrumentChecks.passed,
			performedAt: instrumentChecks.performedAt,
			validUntil: instrumentChecks.validUntil,
		})
		.from(instrumentChecks)
		.where(eq(instrumentChecks.instrumentId, instrumentId))
		.orderBy(desc(instrumentChecks.performedAt))
		.limit(1)
	return row ?? null
}

/** An instrument with whether it may be used now and why (not). */
export async function instrumentWithReadiness(db: Db, instrumentId: string, now: Date) {
	const [instrument] = await db.select().from(instruments).where(eq(instruments.id, instrumentId))
	if (!instrument) return null
	return { instrument, readiness: instrumentReadiness(instrument, await latestCheck(db, instrument.id), now) }
}

/**
 * Records a polystyrene check: the film spectrum is imported and stored (frozen at once, as evidence), the
 * engine's check decides pass or fail under the instrument's band table, and the check is valid for the
 * instrument's period from the moment it was performed. One transaction; a file that cannot be read, or that is
 * already stored (a check needs a new measurement), leaves nothing behind.
 */
export async function recordInstrumentCheck(
	db: Db,
	input: {
		actor: Actor
		instrumentId: string
		fileName: string
		bytes: Uint8Array
		notes: string | null
		now: Date
	},
): Promise<Result<{ checkId: string; passed: boolean; check: PolystyreneCheck }, DomainError>> {
	const [instrument] = await db.select().from(instruments).where(eq(instruments.id, input.instrumentId))
	if (!instrument) return err(new NotFound('The instrument'))
	if (instrument.retiredAt) return err(new Conflict(`${instrument.code} is retired; its checks are closed.`))
	const sha256 = sha256Hex(input.bytes)
	const [existing] = await db.select({ fileName: spectra.fileName }).from(spectra).where(eq(spectra.sha256, sha256))
	if (existing) {
		return err(
			new Conflict(
				`This file is already stored (as ${existing.fileName}). A check needs a new measurement of the film; nothing was recorded.`,
			),
		)
	}
	const imported = importSpectrum(input.bytes, { fileName: input.fileName, maxBytes: MAX_SPECTRUM_FILE_BYTES })
	if (!imported.ok) return err(new DomainError(`${input.fileName}: ${imported.error.message}`, 422))
	const check = checkPolystyrene(imported.value.spectrum, { table: instrument.checkTable as PolystyreneTable['id'] })
	const validUntil = checkValidUntil(input.now, instrument.checkValidityDays)
	return db.transaction(async (tx) => {
		const spectrumId = await insertSpectrum(tx, {
			actor: input.actor,
			fileName: input.fileName,
			bytes: input.bytes,
			sha256,
			imported: imported.value,
			metadata: {
				purpose: 'instrument-check',
				materialId: null,
				technique: null,
				instrument: instrument.code,
				resolution: null,
				acquiredOn: input.now.toISOString().slice(0, 10),
				referenceStandardName: 'Polystyrene film',
				referenceStandardLot: null,
				notes: null,
			},
			now: input.now,
			lockedAt: input.now,
		})
		if (!spectrumId) return err(new Conflict('This file was stored by someone else just now; nothing was recorded.'))
		const [row] = await tx
			.insert(instrumentChecks)
			.values({
				instrumentId: instrument.id,
				spectrumId,
				passed: check.pass,
				result: check,
				algorithmVersion: check.algorithmVersion,
				performedBy: input.actor.id,
				performedAt: input.now,
				validUntil,
				notes: input.notes,
			})
			.returning({ id: instrumentChecks.id })
		if (!row) throw new Error('check insert returned no row')
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: check.pass ? 'instrument-check.passed' : 'instrument-check.failed',
			entityType: 'instrument',
			entityId: instrument.id,
			after: {
				checkId: row.id,
				passed: check.pass,
				table: check.table.id,
				validUntil: validUntil.toISOString(),
				worstDeviation: Math.max(0, ...check.bands.map((band) => Math.abs(band.deviation ?? 0))),
				sha256,
			},
			occurredAt: input.now,
		})
		return ok({ checkId: row.id, passed: check.pass, check })
	})
}

/** Every instrument with its latest check and readiness at `now`, by code. */
export async function listInstruments(db: Db, now: Date) {
	const rows = await db.select().from(instruments).orderBy(instruments.code)
	return Promise.all(
		rows.map(async (instrument) => {
			const latest = await latestCheck(db, instrument.id)
			return { instrument, latest, readiness: instrumentReadiness(instrument, latest, now) }
		}),
	)
}

/** The checks of one instrument, newest first, with who performed them. */
export async function listChecks(db: Db, instrumentId: string) {
	return db
		.select({
			id: instrumentChecks.id,
			passed: instrumentChecks.passed,
			result: instrumentChecks.result,
			performedAt: instrumentChecks.performedAt,
			validUntil: instrumentChecks.validUntil,
			notes: instrumentChecks.notes,
			performedBy: users.name,
			spectrumId: instrumentChecks.spectrumId,
			fileName: spectra.fileName,
		})
		.from(instrumentChecks)
		.innerJoin(users, eq(users.id, instrumentChecks.performedBy))
		.innerJoin(spectra, eq(spectra.id, instrumentChecks.spectrumId))
		.where(eq(instrumentChecks.instrumentId, instrumentId))
		.orderBy(desc(instrumentChecks.performedAt))
}
