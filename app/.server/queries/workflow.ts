import { and, asc, eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { redlines, signatures } from '#app/.server/db/schema/specifications.ts'
import { loadSnapshot, versionContentHash } from '#app/.server/services/spec-workflow.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { describeAnchor, isTextAnchor } from '#shared/specs/redline-anchors.ts'
import { availableActions, signatureManifestation, signatureStatement } from '#shared/workflow/spec-version-machine.ts'

/**
 * What the workflow part of a version page shows: the steps this actor may take (with the reason when one is
 * blocked), the signature manifest (current and voided), the statements a signer would sign, and the redlines.
 */
export async function getWorkflowView(db: Db, versionId: string, actor: Actor, now: Date) {
	const loaded = await loadSnapshot(db, versionId, false)
	if (!loaded) return null
	const { snapshot, version, specification, content } = loaded
	const redlineRows = await db
		.select({
			id: redlines.id,
			parentId: redlines.parentId,
			anchor: redlines.anchor,
			body: redlines.body,
			suggestedText: redlines.suggestedText,
			status: redlines.status,
			createdAt: redlines.createdAt,
			resolution: redlines.resolution,
			authorId: redlines.authorId,
			resolvedBy: redlines.resolvedBy,
		})
		.from(redlines)
		.where(eq(redlines.versionId, versionId))
		.orderBy(asc(redlines.createdAt))
	const names = new Map(
		(await db.select({ id: users.id, name: users.name }).from(users)).map((user) => [user.id, user.name]),
	)
	const [signatureRows, hashed, actorRow] = await Promise.all([
		db.select().from(signatures).where(eq(signatures.versionId, versionId)).orderBy(asc(signatures.signedAt)),
		versionContentHash(db, versionId),
		db
			.select({ name: users.name })
			.from(users)
			.where(eq(users.id, actor.id))
			.then((rows) => rows[0]),
	])
	const subject = { documentNumber: specification.documentNumber, versionNumber: version.versionNumber }
	const printedName = actorRow?.name ?? actor.name
	const threads = redlineRows
		.filter((row) => row.parentId === null)
		.map((row) => ({
			id: row.id,
			anchor: row.anchor,
			anchorLabel: describeAnchor(row.anchor, content.bands),
			body: row.body,
			suggestedText: row.suggestedText,
			canAcceptSuggestion: row.suggestedText !== null && (isTextAnchor(row.anchor) || row.anchor.startsWith('band:')),
			status: row.status,
			authorName: names.get(row.authorId) ?? 'unknown',
			createdAt: row.createdAt.toISOString(),
			resolverName: row.resolvedBy ? (names.get(row.resolvedBy) ?? null) : null,
			resolution: row.resolution,
			replies: redlineRows
				.filter((reply) => reply.parentId === row.id)
				.map((reply) => ({
					id: reply.id,
					body: reply.body,
					authorName: names.get(reply.authorId) ?? 'unknown',
					createdAt: reply.createdAt.toISOString(),
				})),
		}))
	return {
		state: snapshot.state,
		actions: availableActions(snapshot, actor, now),
		contentSha256: hashed?.hash ?? null,
		lockedHash: version.contentSha256,
		statements: {
			reviewed: signatureStatement('reviewed', { ...subject, printedName, contentHash: hashed?.hash }),
			approved: signatureStatement('approved', { ...subject, printedName, contentHash: hashed?.hash }),
		},
		signatures: signatureRows.map((row) => ({
			id: row.id,
			voided: row.voidedAt !== null,
			contentSha256: row.contentSha256,
			authentication: row.authentication,
			...signatureManifestation(
				{ meaning: row.meaning, signedAt: row.signedAt, timeZone: row.signerTimeZone },
				{ ...subject, printedName: row.printedName, contentHash: row.contentSha256 },
			),
			matchesCurrentContent: hashed ? hashed.hash === row.contentSha256 : false,
		})),
		redlines: threads,
		openRedlines: snapshot.openRedlines,
	}
}

/** Open redlines of a version (for counting in lists). */
export async function countOpenRedlines(db: Db, versionId: string): Promise<number> {
	const rows = await db
		.select({ id: redlines.id })
		.from(redlines)
		.where(and(eq(redlines.versionId, versionId), eq(redlines.status, 'open')))
	return rows.length
}
