import { and, eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { redlines, specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { queueMail } from '#app/.server/services/notifications.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { parseContent, saveDraft } from '#app/.server/services/specifications.ts'
import { can, type Actor } from '#shared/authz/permissions.ts'
import { Conflict, DomainError, err, Forbidden, NotFound, ok, type Result } from '#shared/errors.ts'
import { applySuggestion, validAnchor } from '#shared/specs/redline-anchors.ts'

const auditActor = (actor: Actor) => ({ id: actor.id, label: actor.email })

/** A reviewer's (or approver's) comment on a field or band row of a version in review, with optional suggested text. */
export async function addRedline(
	db: Db,
	input: { actor: Actor; versionId: string; anchor: string; body: string; suggestedText: string | null; now: Date },
): Promise<Result<{ redlineId: string }, DomainError>> {
	if (!can(input.actor, 'spec-version:sign'))
		return err(new Forbidden('Only reviewers and approvers redline a version.'))
	return db.transaction(async (tx) => {
		const [version] = await tx.select().from(specVersions).where(eq(specVersions.id, input.versionId))
		if (!version) return err(new NotFound('The specification version'))
		if (version.state !== 'in_review') return err(new Conflict('Redlines are added while the version is in review.'))
		if (version.editorIds.includes(input.actor.id))
			return err(new Forbidden('You edited this version, so you cannot redline it.'))
		if (!validAnchor(input.anchor, parseContent(version.content)))
			return err(new DomainError('Point the redline at a field or band of this version.', 422))
		const [row] = await tx
			.insert(redlines)
			.values({
				versionId: input.versionId,
				anchor: input.anchor,
				body: input.body,
				suggestedText: input.suggestedText,
				authorId: input.actor.id,
				createdAt: input.now,
			})
			.returning({ id: redlines.id })
		const [specification] = await tx.select().from(specifications).where(eq(specifications.id, version.specificationId))
		await queueMail(tx, {
			kind: 'redlines-posted',
			to: [...new Set([version.authorId, ...version.editorIds])].map((userId) => ({ userId })),
			specification: specification!,
			version,
			actorName: input.actor.name,
			reason: input.body,
			effectiveFrom: null,
			now: input.now,
		})
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'redline.added',
			entityType: 'spec-version',
			entityId: input.versionId,
			after: { redlineId: row!.id, anchor: input.anchor, body: input.body, suggestedText: input.suggestedText },
			occurredAt: input.now,
		})
		return ok({ redlineId: row!.id })
	})
}

/** A reply in a redline's thread, by anyone who works on the version. */
export async function replyToRedline(
	db: Db,
	input: { actor: Actor; redlineId: string; body: string; now: Date },
): Promise<Result<{ redlineId: string }, DomainError>> {
	return db.transaction(async (tx) => {
		const [parent] = await tx.select().from(redlines).where(eq(redlines.id, input.redlineId))
		if (!parent || parent.parentId) return err(new NotFound('The redline'))
		const [row] = await tx
			.insert(redlines)
			.values({
				versionId: parent.versionId,
				parentId: parent.id,
				anchor: parent.anchor,
				body: input.body,
				authorId: input.actor.id,
				status: 'resolved',
				createdAt: input.now,
			})
			.returning({ id: redlines.id })
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: 'redline.replied',
			entityType: 'spec-version',
			entityId: parent.versionId,
			after: { redlineId: parent.id, body: input.body },
			occurredAt: input.now,
		})
		return ok({ redlineId: row!.id })
	})
}

/** Marks a redline resolved (or open again), with an optional note on how it was resolved. */
export async function setRedlineStatus(
	db: Db,
	input: { actor: Actor; redlineId: string; status: 'open' | 'resolved'; resolution: string | null; now: Date },
): Promise<Result<true, DomainError>> {
	return db.transaction(async (tx) => {
		const [redline] = await tx
			.select()
			.from(redlines)
			.where(and(eq(redlines.id, input.redlineId)))
		if (!redline || redline.parentId) return err(new NotFound('The redline'))
		const [version] = await tx
			.select({ state: specVersions.state })
			.from(specVersions)
			.where(eq(specVersions.id, redline.versionId))
		if (version?.state !== 'draft' && version?.state !== 'in_review')
			return err(new Conflict('Redlines of a signed version are closed.'))
		await tx
			.update(redlines)
			.set(
				input.status === 'resolved'
					? { status: 'resolved', resolvedBy: input.actor.id, resolvedAt: input.now, resolution: input.resolution }
					: { status: 'open', resolvedBy: null, resolvedAt: null, resolution: null },
			)
			.where(eq(redlines.id, redline.id))
		await recordAudit(tx, {
			actor: auditActor(input.actor),
			action: input.status === 'resolved' ? 'redline.resolved' : 'redline.reopened',
			entityType: 'spec-version',
			entityId: redline.versionId,
			before: { status: redline.status },
			after: { redlineId: redline.id, status: input.status, resolution: input.resolution },
			occurredAt: input.now,
		})
		return ok(true)
	})
}

/**
 * The author takes a redline's suggested text into the draft in one step: the anchored field (or band
 * assignment) is replaced through the normal, optimistic save, and the redline is resolved.
 */
export async function acceptRedlineSuggestion(
	db: Db,
	input: { actor: Actor; redlineId: string; now: Date },
): Promise<Result<{ revision: number }, DomainError>> {
	const [redline] = await db.select().from(redlines).where(eq(redlines.id, input.redlineId))
	if (!redline || redline.parentId) return err(new NotFound('The redline'))
	if (redline.suggestedText === null) return err(new DomainError('This redline suggests no text to accept.', 422))
	if (redline.status !== 'open') return err(new Conflict('This redline is already resolved.'))
	const [version] = await db.select().from(specVersions).where(eq(specVersions.id, redline.versionId))
	if (!version) return err(new NotFound('The specification version'))
	if (version.state !== 'draft')
		return err(new Conflict('Suggestions are accepted into a draft: the version must be returned to draft first.'))
	const next = applySuggestion(parseContent(version.content), redline.anchor, redline.suggestedText)
	if (!next) return err(new DomainError('The field this redline points at no longer exists.', 422))
	const saved = await saveDraft(db, {
		actor: input.actor,
		versionId: version.id,
		revision: version.revision,
		content: next,
		changeReason: version.changeReason,
		now: input.now,
	})
	if (!saved.ok) return saved
	const resolved = await setRedlineStatus(db, {
		actor: input.actor,
		redlineId: redline.id,
		status: 'resolved',
		resolution: 'Suggested text accepted',
		now: input.now,
	})
	if (!resolved.ok) return resolved
	return ok(saved.value)
}
