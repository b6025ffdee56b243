/**
 * The PDF record of an identity run: its data resolved from the database (`buildRunRecordData`), drawn by the
 * document pipeline off the main thread, and every download audited (`getRunRecord`).
 *
 * Unlike a signed version's dossier, a run record is not stored: it is rendered at each download, because the
 * record around the fixed, signed core grows (the verification, the investigation, the retests). What identifies
 * the run is its record SHA-256, printed on every page; the audit event of each download keeps the SHA-256 of the
 * bytes handed out, so any copy can be traced to the download that produced it.
 */
import { eq } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { instrumentChecks } from '#app/.server/db/schema/runs.ts'
import { getRun } from '#app/.server/queries/runs.ts'
import { renderOffThread } from '#app/.server/render/render-pool.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { documentOrganisation } from '#app/.server/services/dossiers.ts'
import { loadSpectrum } from '#app/.server/services/spectra.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { type FigurePoint, thinForFigure } from '#shared/dossier/model.ts'
import type { RunRecordDocumentInput } from '#shared/runs/record-document.ts'
import type { Spectrum } from '#shared/spectra/types.ts'
import { formatInZone } from '#shared/workflow/spec-version-machine.ts'

/** The parts of a stored comparison (run_containers.result) that the record prints. */
const StoredComparisonSchema = z.object({
	reasons: z.array(z.string()),
	bands: z.array(
		z.object({
			expected: z.object({
				position: z.number(),
				tolerance: z.number(),
				assignment: z.string(),
				required: z.boolean(),
			}),
			observed: z.number().nullable(),
			shift: z.number().nullable(),
			withinTolerance: z.boolean(),
		}),
	),
	grid: z.object({ from: z.number(), to: z.number() }),
})

/** The parts of a stored polystyrene check (instrument_checks.result) that the record prints. */
const StoredCheckSchema = z.object({
	bands: z.array(z.object({ deviation: z.number().nullable() })),
	table: z.object({ title: z.string() }),
})

/** Points of a spectrum within [from, to] cm⁻¹, thinned for a figure. */
function figurePoints(spectrum: Spectrum, from: number, to: number): Array<FigurePoint> {
	const out: Array<FigurePoint> = []
	for (let i = 0; i < spectrum.x.length; i++) {
		const x = spectrum.x[i]!
		if (x >= from && x <= to) out.push([x, spectrum.y[i]!])
	}
	return thinForFigure(out, 1500)
}

/** Everything the record of a run shows, resolved to plain values. Pure reads; no clock (renderedAt is given). */
export async function buildRunRecordData(
	db: Db,
	input: { runId: string; renderedAt: Date },
): Promise<RunRecordDocumentInput | null> {
	const found = await getRun(db, input.runId)
	if (!found) return null
	const { run, lot, material, instrument, check, criteria, containers, signatures, retests, retestOf } = found
	const [checkRow] = await db
		.select({ result: instrumentChecks.result })
		.from(instrumentChecks)
		.where(eq(instrumentChecks.id, check.id))
	const checkResult = StoredCheckSchema.parse(checkRow!.result)
	const deviations = checkResult.bands.flatMap((band) => (band.deviation === null ? [] : [Math.abs(band.deviation)]))
	const comparisons = containers.map((row) => StoredComparisonSchema.parse(row.result))
	// The figures show the range the engine compared (the same for every container under one version's criteria).
	const from = Math.min(...comparisons.map((result) => result.grid.from))
	const to = Math.max(...comparisons.map((result) => result.grid.to))
	const reference = found.referenceSpectrumId ? await loadSpectrum(db, found.referenceSpectrumId) : null
	const samples: Array<Awaited<ReturnType<typeof loadSpectrum>>> = []
	for (const row of containers) samples.push(await loadSpectrum(db, row.spectrumId))
	return {
		organisation: documentOrganisation(),
		run: {
			number: run.runNumber,
			state: run.state,
			outcome: run.outcome,
			recordedAt: run.recordedAt.toISOString(),
			recordedBy: run.recordedByName,
		},
		material: { code: material.code, name: material.name },
		lot: {
			number: lot.lotNumber,
			supplier: lot.supplier,
			containerCount: lot.containerCount,
			receivedOn: lot.receivedOn,
		},
		specification: {
			documentNumber: run.documentNumber,
			title: found.specificationTitle,
			versionNumber: run.versionNumber,
			contentSha256: found.versionSha256,
		},
		criteria: {
			minCorrelation: criteria.minCorrelation,
			minDerivativeCorrelation: criteria.minDerivativeCorrelation ?? null,
		},
		instrument: {
			code: instrument.code,
			name: instrument.name,
			check: {
				performedAt: check.performedAt.toISOString(),
				validUntil: check.validUntil.toISOString(),
				passed: check.passed,
				table: checkResult.table.title,
				worstDeviation: deviations.length > 0 ? Math.max(...deviations) : null,
			},
		},
		retestOf: retestOf ? { runNumber: retestOf.runNumber, reason: run.retestReason ?? '' } : null,
		retestedBy: retests.map((retest) => ({ runNumber: retest.runNumber, outcome: retest.outcome })),
		investigation:
			run.outcome === 'flagged'
				? {
						conclusion: run.investigationConclusion,
						summary: run.investigationSummary,
						closedBy: run.investigationClosedByName,
						closedAt: run.investigationClosedAt?.toISOString() ?? null,
					}
				: null,
		reference: reference
			? { fileName: reference.fileName, sha256: reference.sha256, points: figurePoints(reference.spectrum, from, to) }
			: null,
		exclusionRegions: criteria.exclusionRegions.map((region) => ({
			from: region.from,
			to: region.to,
			label: region.label ?? null,
		})),
		containers: containers.map((row, index) => {
			const result = comparisons[index]!
			const sample = samples[index]
			return {
				number: row.containerNumber,
				fileName: row.fileName,
				sampleSha256: row.sampleSha256,
				verdict: z.enum(['conforms', 'does-not-conform', 'inconclusive']).parse(row.verdict),
				correlation: row.correlation,
				derivativeCorrelation: row.derivativeCorrelation,
				reasons: result.reasons,
				bands: result.bands.map((band) => ({
					position: band.expected.position,
					tolerance: band.expected.tolerance,
					assignment: band.expected.assignment,
					required: band.expected.required,
					observed: band.observed,
					shift: band.shift,
					withinTolerance: band.withinTolerance,
				})),
				overlay: sample && reference ? figurePoints(sample.spectrum, from, to) : null,
			}
		}),
		engineVersions: [...new Set(containers.map((row) => row.algorithmVersion))].sort(),
		signatures: signatures.map((signature) => ({
			printedName: signature.printedName,
			meaning: signature.meaning,
			signedAtUtc: signature.signedAt.toISOString(),
			signerTimeZone: signature.signerTimeZone,
			localTime: formatInZone(signature.signedAt, signature.signerTimeZone),
			statement: signature.statement,
			recordSha256: signature.recordSha256,
		})),
		recordSha256: found.recordSha256,
		renderedAt: input.renderedAt.toISOString(),
	}
}

export type RunRecordFile = { bytes: Uint8Array; sha256: string; fileName: string; runNumber: string }

/** The PDF record of a run, rendered now; the download is recorded in the audit trail. Null for an unknown run. */
export async function getRunRecord(
	db: Db,
	input: { actor: Actor; runId: string; now: Date; ipAddress?: string | null },
): Promise<RunRecordFile | null> {
	const data = await buildRunRecordData(db, { runId: input.runId, renderedAt: input.now })
	if (!data) return null
	const rendered = await renderOffThread({ document: 'run-record', data, format: 'pdf', templateId: 'run-record' })
	await recordAudit(db, {
		actor: { id: input.actor.id, label: input.actor.email },
		action: 'identity-run.record-downloaded',
		entityType: 'identity-run',
		entityId: input.runId,
		after: {
			runNumber: data.run.number,
			state: data.run.state,
			recordSha256: data.recordSha256,
			sha256: rendered.sha256,
			template: `${rendered.template.id} ${rendered.template.version}`,
		},
		ipAddress: input.ipAddress ?? null,
		occurredAt: input.now,
	})
	const suffix = data.run.state === 'verified' ? '' : '-not-verified'
	return {
		bytes: rendered.bytes,
		sha256: rendered.sha256,
		fileName: `${data.run.number}-record${suffix}.pdf`,
		runNumber: data.run.number,
	}
}
