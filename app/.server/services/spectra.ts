import { createHash } from 'node:crypto'
import { eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { recordAuditEvents } from '#app/.server/services/audit.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { ENGINE_VERSION } from '#shared/spectra/preprocess.ts'
import { importSpectrum } from '#shared/spectra/import.ts'
import type { SpectrumMetadata } from '#shared/spectra/spectrum-metadata-schema.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

/** Largest file accepted by the library (bytes); the importer refuses anything larger with a clear message. */
export const MAX_SPECTRUM_FILE_BYTES = 10 * 1024 * 1024

export type UploadOutcome =
	| { fileName: string; status: 'stored'; spectrumId: string; points: number; warnings: Array<string> }
	| { fileName: string; status: 'duplicate'; spectrumId: string; message: string }
	| { fileName: string; status: 'failed'; message: string }

/** Float64 arrays are stored as their little-endian bytes (x86 and ARM are little-endian). */
export function floatsToBytes(values: Float64Array): Uint8Array {
	return new Uint8Array(values.buffer, values.byteOffset, values.byteLength)
}

/** The inverse of floatsToBytes; copies so that the result is aligned whatever buffer the driver gave. */
export function bytesToFloats(bytes: Uint8Array): Float64Array {
	return new Float64Array(bytes.slice().buffer)
}

export function sha256Hex(bytes: Uint8Array): string {
	return createHash('sha256').update(bytes).digest('hex')
}

/**
 * Stores one uploaded file: recognised by its SHA-256 if already stored; otherwise parsed, and either stored
 * (original bytes + parsed arrays + metadata + audit event, in one transaction) or refused with the importer's
 * message and nothing saved.
 */
export async function storeSpectrumFile(
	db: Db,
	input: { actor: Actor; fileName: string; bytes: Uint8Array; metadata: SpectrumMetadata; now: Date },
): Promise<UploadOutcome> {
	const { fileName, bytes } = input
	const sha256 = sha256Hex(bytes)
	const [existing] = await db
		.select({ id: spectra.id, fileName: spectra.fileName })
		.from(spectra)
		.where(eq(spectra.sha256, sha256))
	if (existing) {
		return {
			fileName,
			status: 'duplicate',
			spectrumId: existing.id,
			message: `This file is already in the library (stored as ${existing.fileName}); it was not stored twice.`,
		}
	}
	const imported = importSpectrum(bytes, { fileName, maxBytes: MAX_SPECTRUM_FILE_BYTES })
	if (!imported.ok) return { fileName, status: 'failed', message: imported.error.message }
	const points = imported.value.spectrum.x.length
	const id = await db.transaction((tx) =>
		insertSpectrum(tx, { ...input, sha256, imported: imported.value, lockedAt: null }),
	)
	if (!id) {
		// Someone stored the same bytes between our check and our insert.
		const [winner] = await db.select({ id: spectra.id }).from(spectra).where(eq(spectra.sha256, sha256))
		return {
			fileName,
			status: 'duplicate',
			spectrumId: winner!.id,
			message: 'This file is already in the library; it was not stored twice.',
		}
	}
	return {
		fileName,
		status: 'stored',
		spectrumId: id,
		points,
		warnings: imported.value.warnings.map((warning) => warning.message),
	}
}

export type ImportedSpectrum = Extract<ReturnType<typeof importSpectrum>, { ok: true }>['value']

export type SpectrumInsert = {
	actor: Actor
	fileName: string
	bytes: Uint8Array
	sha256: string
	imported: ImportedSpectrum
	metadata: SpectrumMetadata
	now: Date
	lockedAt: Date | null
}

/**
 * Inserts one parsed file with its audit event, inside the caller's transaction. Returns null when the same bytes
 * were stored meanwhile (the SHA-256 is unique). `lockedAt` freezes the row at once (evidence of a run or a check).
 */
export async function insertSpectrum(tx: Db, input: SpectrumInsert): Promise<string | null> {
	const [id] = await insertSpectra(tx, [input])
	return id ?? null
}

/**
 * insertSpectrum for many files at once: one INSERT for the rows and one for their audit events (one event per
 * spectrum, as before, chained in the order given), so a 100-container run costs two round trips instead of 200.
 * Returns each input's id, or null for one whose bytes were stored meanwhile.
 */
export async function insertSpectra(tx: Db, inputs: ReadonlyArray<SpectrumInsert>): Promise<Array<string | null>> {
	if (inputs.length === 0) return []
	const rows = await tx
		.insert(spectra)
		.values(
			inputs.map((input) => {
				const { spectrum, metadata, warnings } = input.imported
				const points = spectrum.x.length
				return {
					sha256: input.sha256,
					fileName: input.fileName,
					byteSize: input.bytes.byteLength,
					originalBytes: input.bytes,
					format: metadata.format,
					title: metadata.title,
					points,
					minWavenumber: spectrum.x[0]!,
					maxWavenumber: spectrum.x[points - 1]!,
					xUnits: metadata.xUnits,
					yUnits: metadata.yUnits,
					ordinate: metadata.ordinate,
					x: floatsToBytes(spectrum.x),
					y: floatsToBytes(spectrum.y),
					warnings,
					labels: metadata.labels,
					parserVersion: ENGINE_VERSION,
					...input.metadata,
					uploadedBy: input.actor.id,
					uploadedAt: input.now,
					lockedAt: input.lockedAt,
				}
			}),
		)
		.onConflictDoNothing({ target: spectra.sha256 })
		.returning({ id: spectra.id, sha256: spectra.sha256 })
	const ids = new Map(rows.map((row) => [row.sha256, row.id]))
	const stored = inputs.flatMap((input) => {
		const id = ids.get(input.sha256)
		return id ? [{ input, id }] : []
	})
	await recordAuditEvents(
		tx,
		stored.map(({ input, id }) => ({
			actor: { id: input.actor.id, label: input.actor.email },
			action: 'spectrum.uploaded',
			entityType: 'spectrum',
			entityId: id,
			after: {
				fileName: input.fileName,
				sha256: input.sha256,
				points: input.imported.spectrum.x.length,
				format: input.imported.metadata.format,
				ordinate: input.imported.metadata.ordinate,
				purpose: input.metadata.purpose,
			},
			occurredAt: input.now,
		})),
	)
	return inputs.map((input) => ids.get(input.sha256) ?? null)
}

/** The parsed data of a stored spectrum, or null. */
export async function loadSpectrum(
	db: Db,
	id: string,
): Promise<{ spectrum: Spectrum; sha256: string; fileName: string } | null> {
	const [row] = await db
		.select({ x: spectra.x, y: spectra.y, sha256: spectra.sha256, fileName: spectra.fileName })
		.from(spectra)
		.where(eq(spectra.id, id))
	if (!row) return null
	return { spectrum: { x: bytesToFloats(row.x), y: bytesToFloats(row.y) }, sha256: row.sha256, fileName: row.fileName }
}
