import { and, arrayContains, desc, eq, inArray, isNull, not, or, type SQL } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { redlines, signatures, specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { can, type Actor } from '#shared/authz/permissions.ts'

export type QueueItem = {
	versionId: string
	specificationId: string
	documentNumber: string
	title: string
	materialName: string
	versionNumber: number
	state: string
	task: 'finish-draft' | 'revise-after-rejection' | 'answer-redlines' | 'review' | 'approve'
	detail: string
	since: string
}

const TASK_ORDER: Record<QueueItem['task'], number> = {
	approve: 0,
	review: 1,
	'revise-after-rejection': 2,
	'answer-redlines': 3,
	'finish-draft': 4,
}

/**
 * What waits for this person: drafts they work on (and why), versions to review, versions to approve. Segregation
 * of duties is applied here too: nobody is offered to sign a version they edited or already signed.
 */
export async function listQueue(db: Db, actor: Actor): Promise<Array<QueueItem>> {
	// Only the versions that can become a task for this person are read (the loop below decides which do): drafts
	// they edited, if they may edit, and versions in review they did not edit, if they may sign. Every page's layout
	// counts the queue, so it must not read every open version of a large library.
	const editedByActor = or(eq(specVersions.authorId, actor.id), arrayContains(specVersions.editorIds, [actor.id]))
	const candidates: Array<SQL> = []
	if (can(actor, 'spec:edit')) candidates.push(and(eq(specVersions.state, 'draft'), editedByActor)!)
	if (can(actor, 'spec-version:sign') && (actor.roles.includes('reviewer') || actor.roles.includes('approver')))
		candidates.push(and(eq(specVersions.state, 'in_review'), not(editedByActor!))!)
	if (candidates.length === 0) return []
	const rows = await db
		.select({
			versionId: specVersions.id,
			specificationId: specifications.id,
			documentNumber: specifications.documentNumber,
			title: specifications.title,
			materialName: materials.name,
			versionNumber: specVersions.versionNumber,
			state: specVersions.state,
			editorIds: specVersions.editorIds,
			authorId: specVersions.authorId,
			lastRejectionReason: specVersions.lastRejectionReason,
			updatedAt: specVersions.updatedAt,
			submittedAt: specVersions.submittedAt,
		})
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.where(or(...candidates))
		.orderBy(desc(specVersions.updatedAt))
	if (rows.length === 0) return []
	const ids = rows.map((row) => row.versionId)
	const [current, open] = await Promise.all([
		db
			.select({ versionId: signatures.versionId, signerId: signatures.signerId, meaning: signatures.meaning })
			.from(signatures)
			.where(and(inArray(signatures.versionId, ids), isNull(signatures.voidedAt))),
		db
			.select({ versionId: redlines.versionId })
			.from(redlines)
			.where(and(inArray(redlines.versionId, ids), eq(redlines.status, 'open'), isNull(redlines.parentId))),
	])
	const items: Array<QueueItem> = []
	for (const row of rows) {
		const base = {
			versionId: row.versionId,
			specificationId: row.specificationId,
			documentNumber: row.documentNumber,
			title: row.title,
			materialName: row.materialName,
			versionNumber: row.versionNumber,
			state: row.state,
		}
		const edited = row.editorIds.includes(actor.id) || row.authorId === actor.id
		const signed = current.filter((signature) => signature.versionId === row.versionId)
		const openRedlines = open.filter((redline) => redline.versionId === row.versionId).length
		if (row.state === 'draft' && edited && can(actor, 'spec:edit')) {
			const since = row.updatedAt.toISOString()
			if (row.lastRejectionReason)
				items.push({
					...base,
					task: 'revise-after-rejection',
					detail: `Returned to draft: ${row.lastRejectionReason}`,
					since,
				})
			else if (openRedlines)
				items.push({
					...base,
					task: 'answer-redlines',
					detail: `${openRedlines} open redline${openRedlines === 1 ? '' : 's'}`,
					since,
				})
			else items.push({ ...base, task: 'finish-draft', detail: 'Draft in progress', since })
			continue
		}
		if (row.state !== 'in_review' || edited) continue
		const since = (row.submittedAt ?? row.updatedAt).toISOString()
		const reviewed = signed.find((signature) => signature.meaning === 'reviewed')
		if (!reviewed && can(actor, 'spec-version:sign') && actor.roles.includes('reviewer')) {
			items.push({
				...base,
				task: 'review',
				detail: openRedlines
					? `Waiting for review · ${openRedlines} open redline${openRedlines === 1 ? '' : 's'}`
					: 'Waiting for review',
				since,
			})
		} else if (
			reviewed &&
			reviewed.signerId !== actor.id &&
			actor.roles.includes('approver') &&
			!signed.some((signature) => signature.meaning === 'approved')
		) {
			items.push({
				...base,
				task: 'approve',
				detail: openRedlines
					? `Reviewed · ${openRedlines} open redline${openRedlines === 1 ? '' : 's'} to close first`
					: 'Reviewed, ready for approval',
				since,
			})
		}
	}
	return items.sort((a, b) => TASK_ORDER[a.task] - TASK_ORDER[b.task] || a.since.localeCompare(b.since))
}
