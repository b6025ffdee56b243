import { eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { SYSTEM_ACTOR } from '#app/.server/services/audit.ts'
import { createMaterial } from '#app/.server/services/materials.ts'
import { storeSpectrumFile } from '#app/.server/services/spectra.ts'
import { createUser } from '#app/.server/services/users.ts'
import type { Actor, Role } from '#shared/authz/permissions.ts'
import { type SpectrumMetadata, SpectrumMetadataSchema } from '#shared/spectra/spectrum-metadata-schema.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

export const TEST_PASSWORD = 'correct-horse-battery'

let sequence = 0

/** A real account (password TEST_PASSWORD) with the given roles, returned as the Actor the app would see. */
export async function makeActor(db: Db, ...roles: Array<Role>): Promise<Actor> {
	sequence += 1
	const email = `${roles.join('-') || 'nobody'}-${sequence}@lab.test`
	const name = `Test ${roles.join(' ')} ${sequence}`
	const outcome = await createUser(db, {
		actor: SYSTEM_ACTOR,
		values: { name, email, password: TEST_PASSWORD, roles: roles.length ? roles : ['author'], timeZone: 'UTC' },
		now: new Date(),
	})
	if (!outcome.ok) throw outcome.error
	return { id: outcome.value.id, name, email, roles }
}

/** The audit actions recorded for one entity, oldest first. */
export async function auditActionsFor(db: Db, entityId: string): Promise<Array<string>> {
	const rows = await db
		.select({ action: auditEvents.action })
		.from(auditEvents)
		.where(eq(auditEvents.entityId, entityId))
		.orderBy(auditEvents.id)
	return rows.map((row) => row.action)
}

/** A registered material with a unique code; returns its id. */
export async function makeMaterial(db: Db, actor: Actor, name = 'Test material'): Promise<string> {
	sequence += 1
	const outcome = await createMaterial(db, { actor, values: { code: `RM-T${sequence}`, name }, now: new Date() })
	if (!outcome.ok) throw outcome.error
	return outcome.value.id
}

/**
 * Stores one file of the shared reference-spectra set through the library service (read in place, never copied);
 * returns the new spectrum's id and the file's bytes. Throws unless the file was stored.
 */
export async function storeSharedSpectrum(
	db: Db,
	actor: Actor,
	relPath: string,
	metadata: Partial<SpectrumMetadata> = {},
): Promise<{ id: string; bytes: Uint8Array }> {
	const bytes = readReferenceFile(relPath)
	const outcome = await storeSpectrumFile(db, {
		actor,
		fileName: relPath.split('/').at(-1)!,
		bytes,
		metadata: { ...SpectrumMetadataSchema.parse({}), ...metadata },
		now: new Date(),
	})
	if (outcome.status !== 'stored') {
		throw new Error(`${relPath} was not stored: ${outcome.status === 'failed' ? outcome.message : 'duplicate'}`)
	}
	return { id: outcome.spectrumId, bytes }
}

// Workflow helpers: imports are hoisted, so these sit with the helpers that use them.
import { specVersions } from '#app/.server/db/schema/specifications.ts'
import { type StepInput, takeWorkflowStep } from '#app/.server/services/spec-workflow.ts'
import { createSpecification, parseContent, saveDraft } from '#app/.server/services/specifications.ts'
import type { BandRow } from '#shared/specs/version-content.ts'
import type { VersionState, WorkflowEvent } from '#shared/workflow/spec-version-machine.ts'

/** The real reference spectrum of the workflow tests: 4-chloroaniline, solid, from the shared set. */
export const WORKFLOW_REFERENCE_FILE = 'compounds/4_chloroaniline_solid_pe1000.jdx'

/** One band of that spectrum: the strongest peak, 1494.3 cm⁻¹ as picked by `bandproof peaks` on the file. */
export const RING_STRETCH_BAND: BandRow = {
	id: 'ring-1494',
	position: 1494,
	tolerance: null,
	assignment: 'aromatic ring C=C stretch',
	intensityClass: 'vs',
	shape: 'sharp',
	required: true,
}

/**
 * A draft that meets every submission requirement: a new specification (for a new material unless one is given)
 * whose first version references the stored real spectrum and holds one band row. Throws unless every step worked.
 */
export async function makeSubmittableDraft(
	db: Db,
	author: Actor,
	options: { materialId?: string; now?: Date } = {},
): Promise<{ specificationId: string; versionId: string; documentNumber: string; referenceSpectrumId: string }> {
	const now = options.now ?? new Date()
	const materialId = options.materialId ?? (await makeMaterial(db, author, '4-Chloroaniline'))
	const created = await createSpecification(db, {
		actor: author,
		materialId,
		title: 'Identity of 4-chloroaniline by FTIR',
		now,
	})
	if (!created.ok) throw created.error
	// The same file may already be in the library (stored by an earlier draft of the same test): then it is reused.
	const stored = await storeSpectrumFile(db, {
		actor: author,
		fileName: WORKFLOW_REFERENCE_FILE.split('/').at(-1)!,
		bytes: readReferenceFile(WORKFLOW_REFERENCE_FILE),
		metadata: { ...SpectrumMetadataSchema.parse({}), materialId },
		now,
	})
	if (stored.status === 'failed') throw new Error(`${WORKFLOW_REFERENCE_FILE} was not stored: ${stored.message}`)
	const [version] = await db.select().from(specVersions).where(eq(specVersions.id, created.value.versionId))
	const content = parseContent(version!.content)
	const saved = await saveDraft(db, {
		actor: author,
		versionId: created.value.versionId,
		revision: version!.revision,
		content: {
			...content,
			scope: 'Identity of incoming 4-chloroaniline, all suppliers.',
			referenceSpectrumId: stored.spectrumId,
			bands: [RING_STRETCH_BAND],
		},
		changeReason: null,
		now,
	})
	if (!saved.ok) throw saved.error
	return { ...created.value, referenceSpectrumId: stored.spectrumId }
}

/**
 * Takes one workflow step and returns the new state; throws when it is refused. Signing events say
 * `reauthenticated: true`, as the route does once `reauthenticate()` has accepted the password.
 */
export async function takeStep(
	db: Db,
	actor: StepInput['actor'],
	versionId: string,
	event: WorkflowEvent,
	now = new Date(),
): Promise<VersionState> {
	const outcome = await takeWorkflowStep(db, { actor, versionId, event, now })
	if (!outcome.ok) throw outcome.error
	return outcome.value.state
}

/**
 * A version taken through submit, review and approval by three different people; `effectiveFrom` (default: now)
 * decides whether it ends approved (a later date) or effective (now). Returns the draft's ids and the final state.
 */
export async function makeSignedVersion(
	db: Db,
	cast: { author: Actor; reviewer: Actor; approver: Actor },
	options: { effectiveFrom?: Date; now?: Date } = {},
): Promise<Awaited<ReturnType<typeof makeSubmittableDraft>> & { state: VersionState }> {
	const now = options.now ?? new Date()
	const draft = await makeSubmittableDraft(db, cast.author, { now })
	await takeStep(db, cast.author, draft.versionId, { type: 'submit' }, now)
	await takeStep(db, cast.reviewer, draft.versionId, { type: 'sign', meaning: 'reviewed', reauthenticated: true }, now)
	const state = await takeStep(
		db,
		cast.approver,
		draft.versionId,
		{ type: 'sign', meaning: 'approved', reauthenticated: true, effectiveFrom: options.effectiveFrom ?? now },
		now,
	)
	return { ...draft, state }
}
