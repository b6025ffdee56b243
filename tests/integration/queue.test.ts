import { expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { listQueue } from '#app/.server/queries/queue.ts'
import { makeActor, makeSubmittableDraft, takeStep } from '#tests/support/factories.ts'

test('[QUEUE-001] each person is offered only their own tasks: authors their drafts, reviewers and approvers what others wrote', async () => {
	const author = await makeActor(db, 'author')
	const colleague = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	const authorReviewer = await makeActor(db, 'author', 'reviewer')

	const draft = await makeSubmittableDraft(db, author)
	const theirs = await makeSubmittableDraft(db, colleague)
	const submitted = await makeSubmittableDraft(db, author)
	await takeStep(db, author, submitted.versionId, { type: 'submit' })
	const ownSubmitted = await makeSubmittableDraft(db, authorReviewer)
	await takeStep(db, authorReviewer, ownSubmitted.versionId, { type: 'submit' })
	const reviewed = await makeSubmittableDraft(db, colleague)
	await takeStep(db, colleague, reviewed.versionId, { type: 'submit' })
	await takeStep(db, reviewer, reviewed.versionId, { type: 'sign', meaning: 'reviewed', reauthenticated: true })

	const tasks = async (actor: typeof author) =>
		(await listQueue(db, actor)).map((item) => `${item.task} ${item.versionId}`).sort()

	expect(await tasks(author)).toEqual([`finish-draft ${draft.versionId}`])
	expect(await tasks(colleague)).toEqual([`finish-draft ${theirs.versionId}`])
	// Segregation of duties: nobody reviews what they edited, and the reviewer is not offered a version they signed.
	expect(await tasks(reviewer)).toEqual([`review ${submitted.versionId}`, `review ${ownSubmitted.versionId}`].sort())
	expect(await tasks(authorReviewer)).toEqual([`review ${submitted.versionId}`])
	expect(await tasks(approver)).toEqual([`approve ${reviewed.versionId}`])
	expect(await tasks(await makeActor(db, 'inspector'))).toEqual([])
})
