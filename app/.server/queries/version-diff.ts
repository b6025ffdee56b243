import { and, eq } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { specVersions } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { parseContent } from '#app/.server/services/specifications.ts'
import { diffVersions, type DiffableVersion, summarizeChanges } from '#shared/specs/diff.ts'

async function diffable(db: Db, specificationId: string, versionId: string) {
	if (!z.uuid().safeParse(versionId).success) return null
	const [row] = await db
		.select()
		.from(specVersions)
		.where(and(eq(specVersions.id, versionId), eq(specVersions.specificationId, specificationId)))
	if (!row) return null
	const content = parseContent(row.content)
	const [reference] = content.referenceSpectrumId
		? await db
				.select({ id: spectra.id, sha256: spectra.sha256, fileName: spectra.fileName })
				.from(spectra)
				.where(eq(spectra.id, content.referenceSpectrumId))
		: []
	const version: DiffableVersion = {
		...content,
		versionNumber: row.versionNumber,
		referenceSpectrum: reference ? { sha256: reference.sha256, fileName: reference.fileName } : null,
	}
	return { version, referenceId: reference?.id ?? null, changeReason: row.changeReason, state: row.state }
}

/** The tracked changes between two versions of one specification (older first), or null when either is unknown. */
export async function getVersionDiff(db: Db, specificationId: string, fromVersionId: string, toVersionId: string) {
	const [from, to] = await Promise.all([
		diffable(db, specificationId, fromVersionId),
		diffable(db, specificationId, toVersionId),
	])
	if (!from || !to) return null
	const [older, newer] = from.version.versionNumber <= to.version.versionNumber ? [from, to] : [to, from]
	const diff = diffVersions(older.version, newer.version)
	return {
		diff,
		summary: summarizeChanges(diff),
		older: { versionNumber: older.version.versionNumber, state: older.state, referenceId: older.referenceId },
		newer: {
			versionNumber: newer.version.versionNumber,
			state: newer.state,
			referenceId: newer.referenceId,
			changeReason: newer.changeReason,
		},
	}
}
