import { and, desc, eq, inArray, sql } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { evidence, specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { bytesToFloats, loadSpectrum } from '#app/.server/services/spectra.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { Conflict, DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'
import { type BandRowProblem, validateBandTable } from '#shared/specs/band-table.ts'
import {
	DEFAULT_DOCUMENT_NUMBER_PATTERN,
	formatDocumentNumber,
	isValidDocumentNumberPattern,
} from '#shared/specs/document-number.ts'
import {
	emptyVersionContent,
	type SpecVersionContent,
	SpecVersionContentSchema,
	toAcceptanceCriteria,
} from '#shared/specs/version-content.ts'
import { compareSpectra } from '#shared/spectra/compare.ts'
import { AcceptanceCriteriaSchema } from '#shared/spectra/criteria.ts'
import { ENGINE_VERSION } from '#shared/spectra/preprocess.ts'
import { prepareLibrary, prepareQuery, scoreLibrary, specificity } from '#shared/spectra/search.ts'

const auditActor = (actor: Actor) => ({ id: actor.id, label: actor.email })

/** The band table breaks a rule; `problems` say which row and why. */
export class BandTableInvalid extends DomainError {
	constructor(readonly problems: Array<BandRowProblem>) {
		super(
			`The band table has ${problems.length} problem${problems.length === 1 ? '' : 's'}: ${problems.map((problem) => problem.message).join(' ')}`,
			422,
		)
	}
}

/** The pattern document numbers are made from (env SPEC_NUMBER_PATTERN), checked once. */
export function documentNumberPattern(): string {
	const pattern = process.env.SPEC_NUMBER_PATTERN ?? DEFAULT_DOCUMENT_NUMBER_PATTERN
	if (!isValidDocumentNumberPattern(pattern)) throw new Error(`SPEC_NUMBER_PATTERN must contain {seq}: ${pattern}`)
	return pattern
}

/** Creates a specification with its first version, a draft with sensible method defaults. */
export async function createSpecification(
	db: Db,
	input: { actor: Actor; materialId: string; title: string; now: Date; pattern?: string },
): Promise<Result<{ specificationId: string; versionId: string; documentNumber: string }, DomainError>> {
	return db.transaction(async (tx) => {
		const [material] = await tx.select({ id: materials.id }).from(materials).where(eq(materials.id, input.materialId))
		if (!material) return err(new NotFound('The material'))
		const [{ next } = { next: 0 }] = await tx.execute<{ next: string }>(
			sql`select nextval('specification_number_seq')::text as next`,
		)
		const documentNumber = formatDocumentNumber(
			input.pattern ?? documentNumberPattern(),
			Number(next),
			input.now.getUTCFullYear(),
		)
		const [taken] = await tx
			.select({ id: specifications.id })
			.from(specifications)
			.where(eq(specifications.documentNumber, documentNumber))
		if (taken)
			return err(new Conflict(`The document number ${documentNumber} is already used; check the numbering pattern.`))
		const [specification] = await tx
			.insert(specifications)
			.values({
				documentNumber,
				title: input.title,
				materialId: input.materialId,
				ownerId: input.actor.id,
				createdAt: input.now,
			})
			.returning({ id: specifications.id })
		const [version] = await tx
			.insert(specVersions)
			.values({
				specificationId: specification!.id,
				versionNumber: 1,
				content: emptyVersionContent(),
				authorId: input.actor.id,
				editorIds: [input.actor.id],
				createdAt: input.now,
				updatedAt: input.now,
			})
			.returning({ id: specVersions.id })
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'specification.created',
			entityType: 'specification',
			entityId: specification!.id,
			after: { documentNumber, title: input.title, materialId: input.materialId, versionId: version!.id },
			occurredAt: input.now,
		})
		return ok({ specificationId: specification!.id, versionId: version!.id, documentNumber })
	})
}

/** The parsed content of a stored version (jsonb is zod-parsed on every read). */
export function parseContent(raw: unknown): SpecVersionContent {
	return SpecVersionContentSchema.parse(raw)
}

function changedTopLevel(before: SpecVersionContent, after: SpecVersionContent) {
	const keys = (Object.keys(after) as Array<keyof SpecVersionContent>).filter(
		(key) => JSON.stringify(before[key]) !== JSON.stringify(after[key]),
	)
	return {
		before: Object.fromEntries(keys.map((key) => [key, before[key]])),
		after: Object.fromEntries(keys.map((key) => [key, after[key]])),
	}
}

/**
 * Saves a draft edited at `revision`. Refused when the version is no longer a draft, when someone saved in
 * between (optimistic locking: nothing is written and the caller keeps the user's text), when the reference
 * spectrum is unknown, or when the band table breaks its rules.
 */
export async function saveDraft(
	db: Db,
	input: {
		actor: Actor
		versionId: string
		revision: number
		content: SpecVersionContent
		changeReason: string | null
		now: Date
	},
): Promise<Result<{ revision: number }, DomainError>> {
	return db.transaction(async (tx) => {
		const [version] = await tx.select().from(specVersions).where(eq(specVersions.id, input.versionId)).for('update')
		if (!version) return err(new NotFound('The specification version'))
		if (version.state !== 'draft') {
			return err(
				new Conflict(
					`Only drafts can be edited. This version is ${version.state.replace('_', ' ')}; start a new version to change it.`,
				),
			)
		}
		if (version.revision !== input.revision) {
			return err(
				new Conflict(
					'Someone else saved this draft after you opened it. Your text is still on this page: open the draft in a new tab, bring your changes over, and save there.',
				),
			)
		}
		const referenceId = input.content.referenceSpectrumId
		if (referenceId) {
			const [reference] = await tx.select({ id: spectra.id }).from(spectra).where(eq(spectra.id, referenceId))
			if (!reference) return err(new NotFound('The chosen reference spectrum'))
		}
		const problems = validateBandTable(
			input.content.bands,
			input.content.method,
			input.content.criteria.defaultBandTolerance,
		)
		if (problems.length) return err(new BandTableInvalid(problems))
		const before = parseContent(version.content)
		const changes = changedTopLevel(before, input.content)
		const reasonChanged = (version.changeReason ?? null) !== (input.changeReason ?? null)
		const editorIds = version.editorIds.includes(input.actor.id)
			? version.editorIds
			: [...version.editorIds, input.actor.id]
		const [saved] = await tx
			.update(specVersions)
			.set({
				content: input.content,
				referenceSpectrumId: referenceId,
				changeReason: input.changeReason,
				revision: version.revision + 1,
				editorIds,
				updatedAt: input.now,
			})
			.where(and(eq(specVersions.id, version.id), eq(specVersions.revision, input.revision)))
			.returning({ revision: specVersions.revision })
		if (Object.keys(changes.after).length || reasonChanged) {
			await recordAudit(tx, {
				actor: auditActor(input.actor),
				action: 'spec-version.saved',
				entityType: 'spec-version',
				entityId: version.id,
				before: { ...changes.before, ...(reasonChanged ? { changeReason: version.changeReason } : {}) },
				after: { ...changes.after, ...(reasonChanged ? { changeReason: input.changeReason } : {}) },
				occurredAt: input.now,
			})
		}
		return ok({ revision: saved!.revision })
	})
}

/**
 * Starts the next version of a specification from its effective version (or its latest, if none is effective):
 * the content is copied and a change reason is required. Refused while another version is still open.
 */
export async function startNextVersion(
	db: Db,
	input: { actor: Actor; specificationId: string; changeReason: string; now: Date },
): Promise<Result<{ versionId: string; versionNumber: number }, DomainError>> {
	return db.transaction(async (tx) => {
		const versions = await tx
			.select()
			.from(specVersions)
			.where(eq(specVersions.specificationId, input.specificationId))
			.orderBy(desc(specVersions.versionNumber))
			.for('update')
		if (versions.length === 0) return err(new NotFound('The specification'))
		const open = versions.find(
			(version) => version.state === 'draft' || version.state === 'in_review' || version.state === 'approved',
		)
		if (open)
			return err(
				new Conflict(
					`Version ${open.versionNumber} is still ${open.state.replace('_', ' ')}; finish it before starting another.`,
				),
			)
		const source = versions.find((version) => version.state === 'effective') ?? versions[0]!
		const versionNumber = versions[0]!.versionNumber + 1
		const [created] = await tx
			.insert(specVersions)
			.values({
				specificationId: input.specificationId,
				versionNumber,
				content: parseContent(source.content),
				referenceSpectrumId: source.referenceSpectrumId,
				changeReason: input.changeReason,
				authorId: input.actor.id,
				editorIds: [input.actor.id],
				createdAt: input.now,
				updatedAt: input.now,
			})
			.returning({ id: specVersions.id })
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'spec-version.created',
			entityType: 'spec-version',
			entityId: created!.id,
			after: { versionNumber, copiedFrom: source.versionNumber },
			reason: input.changeReason,
			occurredAt: input.now,
		})
		return ok({ versionId: created!.id, versionNumber })
	})
}

async function requireDraftForEvidence(db: Db, versionId: string) {
	const [version] = await db.select().from(specVersions).where(eq(specVersions.id, versionId))
	if (!version) return err(new NotFound('The specification version'))
	if (version.state !== 'draft') return err(new Conflict('Evidence is added while the version is a draft.'))
	const content = parseContent(version.content)
	if (!content.referenceSpectrumId)
		return err(new DomainError('Choose the reference spectrum and save the draft first.', 422))
	return ok({ version, content, referenceSpectrumId: content.referenceSpectrumId })
}

/** Compares a stored spectrum with the version's reference under its criteria and keeps the result as evidence. */
export async function recordComparison(
	db: Db,
	input: { actor: Actor; versionId: string; sampleSpectrumId: string; now: Date },
): Promise<Result<{ evidenceId: string; verdict: string }, DomainError>> {
	const draft = await requireDraftForEvidence(db, input.versionId)
	if (!draft.ok) return draft
	const [reference, sample] = await Promise.all([
		loadSpectrum(db, draft.value.referenceSpectrumId),
		loadSpectrum(db, input.sampleSpectrumId),
	])
	if (!reference) return err(new NotFound('The reference spectrum'))
	if (!sample) return err(new NotFound('The spectrum to compare'))
	const criteria = AcceptanceCriteriaSchema.parse(toAcceptanceCriteria(draft.value.content))
	const comparison = compareSpectra(reference.spectrum, sample.spectrum, criteria)
	const id = await db.transaction(async (tx) => {
		const [row] = await tx
			.insert(evidence)
			.values({
				versionId: input.versionId,
				kind: 'comparison',
				title: `${sample.fileName} against ${reference.fileName}`,
				sampleSpectrumId: input.sampleSpectrumId,
				verdict: comparison.verdict,
				correlation: comparison.correlation,
				result: comparison,
				algorithmVersion: comparison.algorithmVersion,
				params: comparison.params,
				inputChecksums: { reference: reference.sha256, sample: sample.sha256 },
				createdBy: input.actor.id,
				createdAt: input.now,
			})
			.returning({ id: evidence.id })
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'evidence.recorded',
			entityType: 'spec-version',
			entityId: input.versionId,
			after: {
				evidenceId: row!.id,
				kind: 'comparison',
				verdict: comparison.verdict,
				correlation: comparison.correlation,
			},
			occurredAt: input.now,
		})
		return row!.id
	})
	return ok({ evidenceId: id, verdict: comparison.verdict })
}

/**
 * Specificity: the version's reference against the reference spectra of every other material. Records the
 * nearest non-target with its margin to the minimum correlation, and suggests a threshold between the
 * material's own replicates and that nearest non-target when replicates exist.
 */
export async function recordSpecificity(
	db: Db,
	input: { actor: Actor; versionId: string; now: Date },
): Promise<Result<{ evidenceId: string; margin: number | null }, DomainError>> {
	const draft = await requireDraftForEvidence(db, input.versionId)
	if (!draft.ok) return draft
	const [specification] = await db
		.select()
		.from(specifications)
		.where(eq(specifications.id, draft.value.version.specificationId))
	const rows = await db
		.select({
			id: spectra.id,
			materialId: spectra.materialId,
			fileName: spectra.fileName,
			sha256: spectra.sha256,
			x: spectra.x,
			y: spectra.y,
		})
		.from(spectra)
		.where(and(eq(spectra.purpose, 'reference'), sql`${spectra.materialId} is not null`))
	const target = draft.value.referenceSpectrumId
	const targetMaterial = specification!.materialId
	const entries = rows
		.filter((row) => row.id !== target)
		.map((row) => ({
			id: row.id,
			material: row.materialId!,
			spectrum: { x: bytesToFloats(row.x), y: bytesToFloats(row.y) },
		}))
	const reference = await loadSpectrum(db, target)
	if (!reference) return err(new NotFound('The reference spectrum'))
	entries.unshift({ id: target, material: targetMaterial, spectrum: reference.spectrum })
	const library = prepareLibrary(entries, { exclusionRegions: draft.value.content.criteria.exclusionRegions })
	const threshold = draft.value.content.criteria.minCorrelation
	const result = specificity(library, target, threshold)
	if (!result.ok) return result
	// Replicates: other reference spectra of the same material, scored against the target.
	const query = prepareQuery(library, reference.spectrum)
	if (!query.ok) return query
	const scores = scoreLibrary(library, query.value)
	const replicateScores = [...scores].filter(
		(_, index) => library.materials[index] === targetMaterial && library.ids[index] !== target,
	)
	const nearest = result.value.nearest
	const names = new Map(rows.map((row) => [row.id, row.fileName]))
	const materialNames = new Map(
		(
			await db
				.select({ id: materials.id, code: materials.code, name: materials.name })
				.from(materials)
				.where(inArray(materials.id, [...new Set(library.materials)]))
		).map((material) => [material.id, `${material.code} · ${material.name}`]),
	)
	const lowestReplicate = replicateScores.length ? Math.min(...replicateScores) : null
	const suggestion =
		lowestReplicate !== null && nearest && lowestReplicate > nearest.correlation
			? suggestThreshold(lowestReplicate, nearest.correlation)
			: null
	const summary = {
		...result.value,
		nearest: nearest
			? {
					...nearest,
					fileName: names.get(nearest.id) ?? nearest.id,
					materialName: materialNames.get(nearest.material) ?? nearest.material,
				}
			: null,
		comparedWith: library.count - 1,
		replicates: replicateScores,
		suggestion,
		thinMargin: result.value.margin !== null && result.value.margin < 0.02,
	}
	const id = await db.transaction(async (tx) => {
		const [row] = await tx
			.insert(evidence)
			.values({
				versionId: input.versionId,
				kind: 'specificity',
				title: `Specificity against ${summary.comparedWith} other reference spectra`,
				verdict: result.value.specific ? 'specific' : 'not-specific',
				correlation: nearest?.correlation ?? null,
				result: summary,
				algorithmVersion: ENGINE_VERSION,
				params: {
					threshold,
					exclusionRegions: draft.value.content.criteria.exclusionRegions,
					algorithm: library.algorithm,
				},
				inputChecksums: { reference: reference.sha256, library: rows.map((entry) => entry.sha256).sort() },
				createdBy: input.actor.id,
				createdAt: input.now,
			})
			.returning({ id: evidence.id })
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'evidence.recorded',
			entityType: 'spec-version',
			entityId: input.versionId,
			after: {
				evidenceId: row!.id,
				kind: 'specificity',
				margin: result.value.margin,
				nearest: nearest?.correlation ?? null,
			},
			occurredAt: input.now,
		})
		return row!.id
	})
	return ok({ evidenceId: id, margin: result.value.margin })
}

/**
 * Takes a specificity record's suggested threshold into the draft: the minimum correlation becomes the
 * suggestion and the justification records the numbers it came from.
 */
export async function acceptThresholdSuggestion(
	db: Db,
	input: { actor: Actor; versionId: string; evidenceId: string; now: Date },
): Promise<Result<{ revision: number; threshold: number }, DomainError>> {
	const [record] = await db
		.select()
		.from(evidence)
		.where(and(eq(evidence.id, input.evidenceId), eq(evidence.versionId, input.versionId)))
	if (!record || record.kind !== 'specificity') return err(new NotFound('The specificity record'))
	const suggestion = (
		record.result as { suggestion?: { threshold: number; lowestReplicate: number; nearestNonTarget: number } | null }
	).suggestion
	if (!suggestion) return err(new DomainError('This record has no suggested threshold.', 422))
	const [version] = await db.select().from(specVersions).where(eq(specVersions.id, input.versionId))
	if (!version) return err(new NotFound('The specification version'))
	const content = parseContent(version.content)
	const justification = `Minimum correlation ${suggestion.threshold}: between the lowest correlation of replicate reference measurements (${suggestion.lowestReplicate.toFixed(4)}) and the nearest reference of another material (${suggestion.nearestNonTarget.toFixed(4)}), from the specificity check of ${input.now.toISOString().slice(0, 10)}.`
	const next: SpecVersionContent = {
		...content,
		criteria: {
			...content.criteria,
			minCorrelation: suggestion.threshold,
			thresholdJustification: content.criteria.thresholdJustification
				? `${content.criteria.thresholdJustification}\n${justification}`
				: justification,
		},
	}
	const saved = await saveDraft(db, {
		actor: input.actor,
		versionId: input.versionId,
		revision: version.revision,
		content: next,
		changeReason: version.changeReason,
		now: input.now,
	})
	if (!saved.ok) return saved
	return ok({ revision: saved.value.revision, threshold: suggestion.threshold })
}

/**
 * Lowest correlation regulatory guidance accepts without further justification (FACTS.md §2.3, READ-2°); a
 * suggested threshold does not go below it unless the data leave no room above it.
 */
export const THRESHOLD_GUIDANCE_FLOOR = 0.95

/**
 * A minimum correlation justified by data: between the lowest replicate of the material and the nearest other
 * material — their midpoint, raised to the guidance floor when that still leaves the replicates clear of it.
 */
export function suggestThreshold(lowestReplicate: number, nearestNonTarget: number) {
	const midpoint = (lowestReplicate + nearestNonTarget) / 2
	const ceiling = lowestReplicate - 0.005
	const raised = midpoint < THRESHOLD_GUIDANCE_FLOOR && THRESHOLD_GUIDANCE_FLOOR <= ceiling
	const threshold = raised ? THRESHOLD_GUIDANCE_FLOOR : midpoint
	return {
		threshold: Math.round(threshold * 1000) / 1000,
		lowestReplicate,
		nearestNonTarget,
		rule: raised ? ('guidance-floor' as const) : ('midpoint' as const),
	}
}
