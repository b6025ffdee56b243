import { and, eq, isNull, lte, ne } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { redlines, signatures, specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { type AuditActor, recordAudit, SYSTEM_ACTOR } from '#app/.server/services/audit.ts'
import { queueWorkflowMail } from '#app/.server/services/notifications.ts'
import { parseContent } from '#app/.server/services/specifications.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { type DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'
import { canonicalVersionDocument, contentHash } from '#shared/specs/canonical.ts'
import {
	actionOf,
	decideTransition,
	type Effect,
	SYSTEM,
	signatureStatement,
	type VersionSnapshot,
	type VersionState,
	type WorkflowEvent,
} from '#shared/workflow/spec-version-machine.ts'

type Tx = Parameters<Parameters<Db['transaction']>[0]>[0]

/** The canonical document of a version and its SHA-256: what a signature covers (content + referenced spectrum hash). */
export async function versionContentHash(
	db: Db,
	versionId: string,
): Promise<{ hash: string; document: ReturnType<typeof canonicalVersionDocument> } | null> {
	const [row] = await db
		.select({ version: specVersions, specification: specifications, materialCode: materials.code })
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.where(eq(specVersions.id, versionId))
	if (!row) return null
	const content = parseContent(row.version.content)
	const [reference] = content.referenceSpectrumId
		? await db
				.select({ sha256: spectra.sha256, fileName: spectra.fileName })
				.from(spectra)
				.where(eq(spectra.id, content.referenceSpectrumId))
		: []
	const document = canonicalVersionDocument({
		documentNumber: row.specification.documentNumber,
		title: row.specification.title,
		materialCode: row.materialCode,
		versionNumber: row.version.versionNumber,
		content,
		referenceSpectrum: reference ?? null,
		changeReason: row.version.changeReason,
	})
	return { hash: await contentHash(document), document }
}

/** The machine's view of a version; `forUpdate` locks the row for a step that will change it. */
export async function loadSnapshot(tx: Db, versionId: string, forUpdate = true) {
	const query = tx
		.select({ version: specVersions, specification: specifications })
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.where(eq(specVersions.id, versionId))
	const [row] = forUpdate ? await query.for('update', { of: specVersions }) : await query
	if (!row) return null
	const current = await tx
		.select({ userId: signatures.signerId, meaning: signatures.meaning, signedAt: signatures.signedAt })
		.from(signatures)
		.where(and(eq(signatures.versionId, versionId), isNull(signatures.voidedAt)))
	const open = await tx
		.select({ id: redlines.id })
		.from(redlines)
		.where(and(eq(redlines.versionId, versionId), eq(redlines.status, 'open'), isNull(redlines.parentId)))
	const content = parseContent(row.version.content)
	const snapshot: VersionSnapshot = {
		state: row.version.state,
		authorId: row.version.authorId,
		coAuthorIds: row.version.editorIds.filter((id) => id !== row.version.authorId),
		versionNumber: row.version.versionNumber,
		changeReason: row.version.changeReason,
		signatures: current,
		openRedlines: open.length,
		effectiveFrom: row.version.effectiveFrom,
		hasReferenceSpectrum: content.referenceSpectrumId !== null,
		bandCount: content.bands.length,
	}
	return { snapshot, version: row.version, specification: row.specification, content }
}

export type StepInput = {
	actor: Actor | typeof SYSTEM
	versionId: string
	event: WorkflowEvent
	now: Date
}

/**
 * Takes one workflow step: the pure machine decides, then the new state, every effect (signature, voided
 * signatures, effective date and lock, superseding the predecessor, mail) and the audit event are written in
 * one transaction. An approval whose effective date has come makes the version effective at once.
 */
export async function takeWorkflowStep(
	db: Db,
	input: StepInput,
): Promise<Result<{ state: VersionState }, DomainError>> {
	return db.transaction(async (tx) => {
		const outcome = await stepInTransaction(tx, input)
		if (!outcome.ok) return outcome
		let state = outcome.value.state
		if (state === 'approved' && outcome.value.effectiveFrom && outcome.value.effectiveFrom <= input.now) {
			const effective = await stepInTransaction(tx, {
				actor: SYSTEM,
				versionId: input.versionId,
				event: { type: 'make-effective' },
				now: input.now,
			})
			if (!effective.ok) return effective
			state = effective.value.state
		}
		return ok({ state })
	})
}

async function stepInTransaction(
	tx: Tx,
	input: StepInput,
): Promise<Result<{ state: VersionState; effectiveFrom: Date | null }, DomainError>> {
	const loaded = await loadSnapshot(tx, input.versionId)
	if (!loaded) return err(new NotFound('The specification version'))
	const { snapshot, version, specification } = loaded
	const decision = decideTransition(snapshot, input.event, input.actor, input.now)
	if (!decision.ok) return decision
	const { next, effects } = decision.value
	const actorRow =
		input.actor === SYSTEM ? null : (await tx.select().from(users).where(eq(users.id, input.actor.id)))[0]
	const auditActor: AuditActor =
		input.actor === SYSTEM ? SYSTEM_ACTOR : { id: input.actor.id, label: input.actor.email }
	const patch: Partial<typeof specVersions.$inferInsert> = { state: next }
	let signed: { meaning: string; hash: string } | null = null
	let effectiveFrom: Date | null = version.effectiveFrom

	for (const effect of effects) {
		switch (effect.kind) {
			case 'record-signature': {
				if (!actorRow) throw new Error('a signature needs a signing user')
				const hashed = await versionContentHash(tx, version.id)
				if (!hashed) return err(new NotFound('The specification version'))
				const statement = signatureStatement(effect.meaning, {
					documentNumber: specification.documentNumber,
					versionNumber: version.versionNumber,
					printedName: actorRow.name,
					contentHash: hashed.hash,
				})
				await tx.insert(signatures).values({
					versionId: version.id,
					signerId: actorRow.id,
					printedName: actorRow.name,
					meaning: effect.meaning,
					statement,
					signedAt: input.now,
					signerTimeZone: actorRow.timeZone,
					contentSha256: hashed.hash,
					authentication: 'password re-entered at signing',
				})
				signed = { meaning: effect.meaning, hash: hashed.hash }
				break
			}
			case 'void-signatures':
				await tx
					.update(signatures)
					.set({ voidedAt: input.now })
					.where(and(eq(signatures.versionId, version.id), isNull(signatures.voidedAt)))
				break
			case 'schedule-effective': {
				// Approval locks the version: content, band table and the referenced spectrum are frozen from here on.
				effectiveFrom = effect.at
				const hashed = signed?.hash ?? (await versionContentHash(tx, version.id))?.hash ?? null
				Object.assign(patch, { effectiveFrom: effect.at, lockedAt: input.now, contentSha256: hashed })
				if (loaded.content.referenceSpectrumId) {
					await tx
						.update(spectra)
						.set({ lockedAt: input.now })
						.where(and(eq(spectra.id, loaded.content.referenceSpectrumId), isNull(spectra.lockedAt)))
				}
				break
			}
			case 'supersede-previous': {
				const previous = await tx
					.select({ id: specVersions.id })
					.from(specVersions)
					.where(
						and(
							eq(specVersions.specificationId, version.specificationId),
							eq(specVersions.state, 'effective'),
							ne(specVersions.id, version.id),
						),
					)
				for (const other of previous) {
					const superseded = await stepInTransaction(tx, {
						actor: SYSTEM,
						versionId: other.id,
						event: { type: 'supersede' },
						now: input.now,
					})
					if (!superseded.ok) return superseded
				}
				break
			}
			case 'notify':
				await queueWorkflowMail(tx, {
					template: effect.template,
					to: effect.to,
					specification,
					version,
					actorName: actorRow?.name ?? 'Bandproof',
					reason: 'reason' in input.event ? (input.event.reason ?? null) : null,
					effectiveFrom,
					now: input.now,
				})
				break
			default:
				assertNever(effect)
		}
	}
	if (input.event.type === 'submit') patch.submittedAt = input.now
	if (input.event.type === 'reject') patch.lastRejectionReason = input.event.reason
	if (next === 'effective') patch.effectiveAt = input.now
	if (next === 'superseded') patch.supersededAt = input.now
	if (next === 'retired') patch.retiredAt = input.now
	await tx.update(specVersions).set(patch).where(eq(specVersions.id, version.id))
	await recordAudit(tx, {
		actor: auditActor,
		action: `spec-version.${actionOf(input.event)}`,
		entityType: 'spec-version',
		entityId: version.id,
		before: { state: snapshot.state },
		after: {
			state: next,
			...(signed ? { signature: signed.meaning, contentSha256: signed.hash } : {}),
			...(patch.effectiveFrom ? { effectiveFrom: patch.effectiveFrom.toISOString() } : {}),
		},
		reason: 'reason' in input.event ? (input.event.reason ?? null) : null,
		occurredAt: input.now,
	})
	return ok({ state: next, effectiveFrom })
}

function assertNever(value: never): never {
	throw new Error(`unhandled workflow effect ${JSON.stringify(value)}`)
}

/** Makes every approved version whose effective date has come effective (and supersedes its predecessor). */
export async function applyDueEffectiveDates(db: Db, now: Date): Promise<number> {
	const due = await db
		.select({ id: specVersions.id })
		.from(specVersions)
		.where(and(eq(specVersions.state, 'approved'), lte(specVersions.effectiveFrom, now)))
	let applied = 0
	for (const version of due) {
		try {
			const outcome = await takeWorkflowStep(db, {
				actor: SYSTEM,
				versionId: version.id,
				event: { type: 'make-effective' },
				now,
			})
			if (outcome.ok) applied += 1
			else console.error(`effective date of version ${version.id} not applied: ${outcome.error.message}`)
		} catch (error) {
			// One failing version must not hold back the others; the next run tries it again.
			console.error(`effective date of version ${version.id} failed:`, error)
		}
	}
	return applied
}

export type { Effect }
