import { and, asc, desc, eq, inArray, isNull, lte, or } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { dossiers } from '#app/.server/db/schema/dossiers.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { evidence, signatures, specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import type { DocumentFormat } from '#app/.server/render/document.ts'
import { renderOffThread } from '#app/.server/render/render-pool.ts'
import { listDossierRuns } from '#app/.server/queries/dossier-runs.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { publicBaseUrl } from '#app/.server/services/notifications.ts'
import { versionContentHash } from '#app/.server/services/spec-workflow.ts'
import { parseContent } from '#app/.server/services/specifications.ts'
import { loadSpectrum } from '#app/.server/services/spectra.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import {
	type DossierDataInput,
	type DossierEvidence,
	type DossierRun,
	type FigurePoint,
	thinForFigure,
} from '#shared/dossier/model.ts'
import { canonicalJson, sha256Hex } from '#shared/specs/canonical.ts'
import { diffVersions, summarizeChanges } from '#shared/specs/diff.ts'
import { bandTolerance } from '#shared/spectra/criteria.ts'
import type { Spectrum } from '#shared/spectra/types.ts'
import { signatureManifestation } from '#shared/workflow/spec-version-machine.ts'

/** States whose dossier is a controlled record: rendered once, stored, served byte-identical. */
const STORED_STATES = new Set(['approved', 'effective', 'superseded', 'retired'])

function points(spectrum: Spectrum, from: number, to: number): Array<FigurePoint> {
	const out: Array<FigurePoint> = []
	for (let i = 0; i < spectrum.x.length; i++) {
		const x = spectrum.x[i]!
		if (x >= from && x <= to) out.push([x, spectrum.y[i]!])
	}
	return thinForFigure(out, 1500)
}

const fixed = (value: unknown, digits = 4) =>
	typeof value === 'number' && Number.isFinite(value) ? value.toFixed(digits) : '—'

type ComparisonJson = {
	verdict: 'conforms' | 'does-not-conform' | 'inconclusive'
	reasons: Array<string>
	correlation: number | null
	derivativeCorrelation: number | null
	distance: number | null
	grid: { comparedPoints: number }
	bands: Array<{ withinTolerance: boolean; expected: { required: boolean } }>
}
type SpecificityJson = {
	specific: boolean
	threshold: number
	margin: number | null
	comparedWith: number
	nearest: { fileName: string; materialName: string; correlation: number } | null
}

/** The organisation and site every controlled document names (BANDPROOF_ORGANISATION, BANDPROOF_SITE). */
export function documentOrganisation(): { name: string; site: string } {
	return {
		name: process.env.BANDPROOF_ORGANISATION ?? 'Calder Vale Pharmaceuticals',
		site: process.env.BANDPROOF_SITE ?? 'Incoming-materials QC laboratory',
	}
}

/**
 * Everything the dossier of one version shows, resolved to plain values. Pure reads; no clock (renderedAt is given).
 * `identityRuns` is the appendix of the variant with runs (see getDossier), or null for the dossier without it.
 */
export async function buildDossierData(
	db: Db,
	input: {
		versionId: string
		renderedAt: Date
		inspectionLine?: string | null
		identityRuns?: Array<DossierRun> | null
	},
): Promise<DossierDataInput | null> {
	const [row] = await db
		.select({ version: specVersions, specification: specifications, material: materials })
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.where(eq(specVersions.id, input.versionId))
	if (!row) return null
	const { version, specification, material } = row
	const content = parseContent(version.content)
	const hashed = await versionContentHash(db, version.id)
	const reference = content.referenceSpectrumId ? await loadSpectrum(db, content.referenceSpectrumId) : null
	const range = { from: content.method.rangeFrom, to: content.method.rangeTo }
	const [signed, evidenceRows, history, audit] = await Promise.all([
		db
			.select()
			.from(signatures)
			.where(and(eq(signatures.versionId, version.id), isNull(signatures.voidedAt)))
			.orderBy(asc(signatures.signedAt)),
		db.select().from(evidence).where(eq(evidence.versionId, version.id)).orderBy(asc(evidence.createdAt)),
		db
			.select()
			.from(specVersions)
			.where(
				and(eq(specVersions.specificationId, specification.id), lte(specVersions.versionNumber, version.versionNumber)),
			)
			.orderBy(asc(specVersions.versionNumber)),
		db
			.select()
			.from(auditEvents)
			.where(
				or(
					eq(auditEvents.entityId, version.id),
					and(eq(auditEvents.entityType, 'specification'), eq(auditEvents.entityId, specification.id)),
				),
			)
			.orderBy(desc(auditEvents.id))
			.limit(60),
	])
	const samples = new Map<string, Spectrum>()
	for (const item of evidenceRows) {
		if (item.sampleSpectrumId && !samples.has(item.sampleSpectrumId)) {
			const loaded = await loadSpectrum(db, item.sampleSpectrumId)
			if (loaded) samples.set(item.sampleSpectrumId, loaded.spectrum)
		}
	}
	const evidenceItems: Array<DossierEvidence> = evidenceRows.map((item) => {
		if (item.kind === 'comparison') {
			const result = item.result as ComparisonJson
			const sample = item.sampleSpectrumId ? samples.get(item.sampleSpectrumId) : undefined
			const bandsWithin = result.bands.filter((band) => band.withinTolerance).length
			return {
				kind: 'comparison',
				title: item.title,
				verdict: result.verdict,
				numbers: [
					{ label: 'Correlation', value: fixed(result.correlation) },
					{ label: 'Derivative correlation', value: fixed(result.derivativeCorrelation) },
					{ label: 'Distance (normalised)', value: fixed(result.distance) },
					{ label: 'Points compared', value: String(result.grid.comparedPoints) },
					{ label: 'Bands within tolerance', value: `${bandsWithin} of ${result.bands.length}` },
				],
				reasons: result.reasons,
				overlay:
					reference && sample
						? {
								reference: points(reference.spectrum, range.from, range.to),
								sample: points(sample, range.from, range.to),
							}
						: null,
			}
		}
		const result = item.result as SpecificityJson
		return {
			kind: 'specificity',
			title: item.title,
			verdict: result.specific ? 'passed' : 'failed',
			numbers: [
				{
					label: 'Nearest other material',
					value: result.nearest ? `${result.nearest.materialName} (${result.nearest.fileName})` : 'none in the library',
				},
				{ label: 'Its correlation', value: fixed(result.nearest?.correlation) },
				{ label: 'Minimum correlation', value: String(result.threshold) },
				{ label: 'Margin', value: fixed(result.margin) },
				{ label: 'References compared', value: String(result.comparedWith) },
			],
			reasons: [],
			overlay: null,
		}
	})
	const revisionHistory = []
	for (const [index, entry] of history.entries()) {
		const previous = index > 0 ? history[index - 1]! : null
		const summary = previous
			? summarizeChanges(
					diffVersions(
						{ ...parseContent(previous.content), versionNumber: previous.versionNumber, referenceSpectrum: null },
						{ ...parseContent(entry.content), versionNumber: entry.versionNumber, referenceSpectrum: null },
					),
				)
			: ['First version.']
		revisionHistory.push({
			versionNumber: entry.versionNumber,
			state: entry.state,
			effectiveFrom: entry.effectiveFrom?.toISOString().slice(0, 10) ?? null,
			changeReason: entry.changeReason,
			summary,
		})
	}
	const subject = { documentNumber: specification.documentNumber, versionNumber: version.versionNumber }
	// A copy issued to an inspector is for information: it carries the "issued to" line and is not a controlled copy.
	const controlled = version.state === 'effective' && !input.inspectionLine
	return {
		organisation: documentOrganisation(),
		document: {
			number: specification.documentNumber,
			title: specification.title,
			material: { code: material.code, name: material.name, casNumber: material.casNumber },
		},
		version: {
			number: version.versionNumber,
			state: version.state,
			effectiveFrom: version.effectiveFrom?.toISOString().slice(0, 10) ?? null,
			changeReason: version.changeReason,
		},
		controlledCopy: {
			number: STORED_STATES.has(version.state) ? `CC-${specification.documentNumber}-V${version.versionNumber}` : null,
			issuedTo: controlled ? 'Master copy held in Bandproof' : null,
			notice: controlled ? 'controlled' : 'uncontrolled',
			inspectionLine: input.inspectionLine ?? null,
		},
		signatures: signed.map((signature) => ({
			printedName: signature.printedName,
			meaning: signature.meaning,
			signedAtUtc: signature.signedAt.toISOString(),
			signerTimeZone: signature.signerTimeZone,
			localTime: signatureManifestation(
				{ meaning: signature.meaning, signedAt: signature.signedAt, timeZone: signature.signerTimeZone },
				{ ...subject, printedName: signature.printedName },
			).signedAtLocal,
			contentSha256: signature.contentSha256,
		})),
		body: {
			scope: content.scope,
			method: content.method,
			criteria: {
				minCorrelation: content.criteria.minCorrelation,
				minDerivativeCorrelation: content.criteria.minDerivativeCorrelation,
				defaultBandTolerance: content.criteria.defaultBandTolerance,
				exclusionRegions: content.criteria.exclusionRegions.map((region) => ({
					from: region.from,
					to: region.to,
					label: region.label ?? null,
				})),
				thresholdJustification: content.criteria.thresholdJustification,
			},
			notes: content.notes,
		},
		referenceSpectrum: reference
			? {
					fileName: reference.fileName,
					sha256: reference.sha256,
					points: points(reference.spectrum, range.from, range.to),
					yLabel: 'Absorbance',
					bands: content.bands.map((band) => ({ position: band.position, label: String(Math.round(band.position)) })),
				}
			: null,
		bands: content.bands.map((band) => ({
			position: band.position,
			tolerance:
				Math.round(
					bandTolerance(
						{ position: band.position, tolerance: band.tolerance ?? undefined },
						content.criteria.defaultBandTolerance,
					) * 10,
				) / 10,
			assignment: band.assignment,
			intensityClass: band.intensityClass,
			shape: band.shape,
			required: band.required,
		})),
		evidence: evidenceItems,
		revisionHistory,
		auditExtract: audit.reverse().map((event) => ({
			at: event.occurredAt.toISOString(),
			actor: event.actorLabel,
			action: event.action,
			detail: event.reason ?? (event.after ? JSON.stringify(event.after).slice(0, 300) : ''),
		})),
		contentSha256: hashed!.hash,
		verification: {
			url: `${publicBaseUrl()}/verify`,
			instructions:
				'Upload this file, or type its SHA-256, on the verification page: Bandproof says whether it matches a stored dossier, and which document, version and template made it.',
		},
		identityRuns: input.identityRuns ?? null,
		renderedAt: input.renderedAt.toISOString(),
	}
}

/**
 * The "issued to … for inspection" line of an inspector's own copy of a dossier, the same whether it is downloaded
 * from the inspection pages or through the API. `access` is what `inspectorAccess` found for the version.
 */
export function inspectionCopyLine(actor: Actor, access: { purpose: string; endsAt: Date }, now: Date): string {
	const day = (at: Date) => at.toISOString().slice(0, 10)
	return `Issued to ${actor.name || actor.email} on ${day(now)} for inspection (${access.purpose}); read-only access until ${day(access.endsAt)}.`
}

export type DossierFile = { bytes: Uint8Array; sha256: string; fileName: string; stored: boolean }

/**
 * The dossier of a version in a format. Signed versions (approved and later) are rendered once per state and
 * stored: every later request gets the same bytes. Drafts and versions in review are rendered on demand and
 * carry the DRAFT mark. Every download is recorded in the audit trail.
 *
 * With `includeRuns`, the dossier carries Appendix A, the verified identity runs that tested against the version.
 * That list grows after the version is signed, so it cannot live in the one stored dossier of a state without
 * breaking the promise that every download of it is the same file. It is a separate stored variant instead, keyed
 * by the SHA-256 of the canonical JSON (RFC 8785) of the appendix rows (`includedRunsSha256`): the same runs, as
 * printed, always give the same stored bytes; a newly verified run or a concluded investigation changes the key and
 * so renders and stores a new variant, while earlier copies stay stored and verifiable. The dossier without runs is
 * untouched by any of this.
 */
export async function getDossier(
	db: Db,
	input: {
		actor: Actor | null
		versionId: string
		format: DocumentFormat
		now: Date
		ipAddress?: string | null
		purpose: 'download' | 'preview' | 'seed'
		/** For an inspector: the "issued to … for inspection" line. Such copies are rendered for them, not stored. */
		inspectionLine?: string
		/** The variant with the identity-runs appendix. */
		includeRuns?: boolean
	},
): Promise<DossierFile | null> {
	const [version] = await db
		.select({
			state: specVersions.state,
			versionNumber: specVersions.versionNumber,
			documentNumber: specifications.documentNumber,
		})
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.where(eq(specVersions.id, input.versionId))
	if (!version) return null
	const issued = Boolean(input.inspectionLine)
	const identityRuns = input.includeRuns ? await listDossierRuns(db, input.versionId) : null
	const includedRunsSha256 = identityRuns ? await sha256Hex(canonicalJson(identityRuns)) : null
	const fileName = `${version.documentNumber}-v${version.versionNumber}-${version.state}${identityRuns ? '-with-runs' : ''}${issued ? '-inspection-copy' : ''}.${input.format}`
	const stores = STORED_STATES.has(version.state) && !issued
	const sameVariant = and(
		eq(dossiers.versionId, input.versionId),
		eq(dossiers.format, input.format),
		eq(dossiers.versionState, version.state),
		includedRunsSha256 === null
			? isNull(dossiers.includedRunsSha256)
			: eq(dossiers.includedRunsSha256, includedRunsSha256),
	)
	let file: DossierFile | null = null
	if (stores) {
		const [stored] = await db.select().from(dossiers).where(sameVariant)
		if (stored) file = { bytes: stored.bytes, sha256: stored.sha256, fileName, stored: true }
	}
	if (!file) {
		const data = await buildDossierData(db, {
			versionId: input.versionId,
			renderedAt: input.now,
			inspectionLine: input.inspectionLine ?? null,
			identityRuns,
		})
		if (!data) return null
		const rendered = await renderOffThread({ document: 'dossier', data, format: input.format, templateId: 'dossier' })
		const template = rendered.template
		if (stores) {
			const [inserted] = await db
				.insert(dossiers)
				.values({
					versionId: input.versionId,
					format: input.format,
					versionState: version.state,
					sha256: rendered.sha256,
					byteSize: rendered.bytes.byteLength,
					bytes: rendered.bytes,
					templateId: template.id,
					templateVersion: template.version,
					templateSha256: template.sha256,
					controlledCopyNumber: String(data.controlledCopy.number),
					renderedAt: input.now,
					renderedBy: input.actor?.id ?? null,
					includedRunsSha256,
				})
				.onConflictDoNothing()
				.returning({ bytes: dossiers.bytes, sha256: dossiers.sha256 })
			if (inserted) {
				await recordAudit(db, {
					actor: input.actor ? { id: input.actor.id, label: input.actor.email } : { id: null, label: 'system' },
					action: 'dossier.stored',
					entityType: 'spec-version',
					entityId: input.versionId,
					after: {
						format: input.format,
						state: version.state,
						sha256: rendered.sha256,
						template: `${template.id} ${template.version}`,
						templateSha256: template.sha256,
						...(identityRuns ? { includedRuns: identityRuns.map((run) => run.runNumber), includedRunsSha256 } : {}),
					},
					occurredAt: input.now,
				})
				file = { bytes: rendered.bytes, sha256: rendered.sha256, fileName, stored: true }
			} else {
				// Someone stored it first: serve theirs, so every copy is the same.
				const [winner] = await db.select().from(dossiers).where(sameVariant)
				file = { bytes: winner!.bytes, sha256: winner!.sha256, fileName, stored: true }
			}
		} else {
			file = { bytes: rendered.bytes, sha256: rendered.sha256, fileName, stored: false }
		}
	}
	if (input.purpose !== 'seed' && input.actor) {
		await recordAudit(db, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: input.purpose === 'preview' ? 'dossier.previewed' : 'dossier.downloaded',
			entityType: 'spec-version',
			entityId: input.versionId,
			after: {
				format: input.format,
				sha256: file.sha256,
				stored: file.stored,
				...(issued ? { issuedFor: input.inspectionLine } : {}),
				...(identityRuns ? { includedRuns: identityRuns.length } : {}),
			},
			ipAddress: input.ipAddress ?? null,
			occurredAt: input.now,
		})
	}
	return file
}

/** The stored dossiers a hash could match, for "verify a copy". */
export async function listDossierRecords(db: Db, sha256: string) {
	return db
		.select({
			sha256: dossiers.sha256,
			format: dossiers.format,
			versionState: dossiers.versionState,
			renderedAt: dossiers.renderedAt,
			templateId: dossiers.templateId,
			templateVersion: dossiers.templateVersion,
			templateSha256: dossiers.templateSha256,
			documentNumber: specifications.documentNumber,
			title: specifications.title,
			versionNumber: specVersions.versionNumber,
			versionId: specVersions.id,
			specificationId: specifications.id,
		})
		.from(dossiers)
		.innerJoin(specVersions, eq(specVersions.id, dossiers.versionId))
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.where(inArray(dossiers.sha256, [sha256]))
}
