import { type Page } from '@playwright/test'
import { DEMO_PASSWORD, expect, signIn, signOut, snapshot, test } from './fixtures.ts'

// The demo scenario (scripts/demo-scenario.ts) seeds QC-IR-0004, "Identification of ethyl acetate by ATR-FTIR", as a
// version 1 draft by Maren Oduya (author), and QC-IR-0003 (acetylsalicylic acid) in review with one open redline on
// the sample preparation. The journey below takes QC-IR-0004 from draft to effective twice, so it changes the demo
// data for every later test of this run: it must stay the only journey that signs QC-IR-0004.
const DOC = 'QC-IR-0004'
const TITLE = 'Identification of ethyl acetate by ATR-FTIR'
const AUTHOR = 'author@bandproof.test'
const REVIEWER = 'reviewer@bandproof.test'
const APPROVER = 'approver@bandproof.test'
const ADMIN = 'admin@bandproof.test'

const SUGGESTED_SCOPE =
	'Identity of every incoming drum of ethyl acetate (Ph. Eur. grade) from approved suppliers, sampled per container before release to production.'
const REJECTION_REASON = 'The scope must say that every drum is tested; see my redline on Scope.'
const NEW_VERSION_REASON = 'Tighten the minimum correlation after the replicate study of the ethyl acetate reference.'

/** "2026-03-02 14:05:09 UTC" and "2026-03-02 15:05:09 CET (Europe/Warsaw)", as the manifest prints them. */
const UTC_STAMP = /\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2} UTC/
const zoneStamp = (zone: string) =>
	new RegExp(`\\d{4}-\\d{2}-\\d{2} \\d{2}:\\d{2}:\\d{2} \\S+ \\(${zone.replace('/', '\\/')}\\)`)

/** The version page's <title> carries the document, version and state: "QC-IR-0004 v1 (In review) · Bandproof". */
async function expectState(page: Page, version: number, state: string) {
	await expect(page).toHaveTitle(`${DOC} v${version} (${state}) · Bandproof`)
}

async function openFromSpecifications(page: Page) {
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Specifications' }).click()
	await page.getByRole('link', { name: DOC, exact: true }).click()
	await expect(page.getByRole('heading', { level: 1, name: TITLE })).toBeVisible()
}

/** The confirmation toast after a step (the spectrum viewer has status regions of its own, hence the filter). */
async function expectToast(page: Page, text: string) {
	await expect(page.getByRole('status').filter({ hasText: text })).toBeVisible()
}

/** Opens My queue, checks that the count badge agrees with the list, and opens the version's task there. */
async function openFromQueue(page: Page, version: number, task: 'Review' | 'Approve' | 'Revise') {
	const nav = page.getByRole('navigation', { name: 'Main' })
	await nav.getByRole('link', { name: /My queue/ }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'My queue' })).toBeVisible()
	const items = page.getByTestId('queue-item')
	const count = await items.count()
	expect(count).toBeGreaterThan(0)
	await expect(nav.getByTestId('queue-count')).toHaveText(String(count))
	await expect(nav.getByRole('link', { name: new RegExp(`^My queue\\s*, ${count} waiting$`) })).toBeVisible()
	const item = items.filter({ has: page.getByRole('link', { name: `${DOC} v${version}`, exact: true }) })
	await expect(item).toContainText(task)
	await item.getByRole('link', { name: `${DOC} v${version}`, exact: true }).click()
	await expect(page.getByRole('heading', { level: 1, name: TITLE })).toBeVisible()
}

async function submitForReview(page: Page, version: number) {
	await page.getByRole('button', { name: 'Submit for review' }).click()
	await expectToast(page, 'Submitted for review')
	await expectState(page, version, 'In review')
}

/** 21 CFR 11.200(a) — FACTS.md §3.1: every signing asks for the password again; PRODUCT.md §7. */
async function sign(page: Page, meaning: 'reviewed' | 'approved', password = DEMO_PASSWORD) {
	const dialog = page.getByRole('dialog', { name: `Electronic signature: ${meaning}` })
	if (!(await dialog.isVisible())) await page.getByRole('button', { name: `Sign as ${meaning}…` }).click()
	await expect(dialog).toBeVisible()
	await dialog.getByLabel('Your password').fill(password)
	await dialog.getByRole('button', { name: 'Sign', exact: true }).click()
}

async function signAsReviewer(page: Page, version: number) {
	await signIn(page, REVIEWER)
	await openFromQueue(page, version, 'Review')
	await sign(page, 'reviewed')
	await expectToast(page, 'Signed as reviewed')
	await expectState(page, version, 'In review')
	await signOut(page)
}

async function signAsApproverEffectiveNow(page: Page, version: number) {
	await signIn(page, APPROVER)
	await openFromQueue(page, version, 'Approve')
	await page.getByRole('button', { name: 'Sign as approved…' }).click()
	const dialog = page.getByRole('dialog', { name: 'Electronic signature: approved' })
	// The effective date defaults to now in the approver's local time; "now" makes the version effective at once.
	await expect(dialog.getByLabel('Effective from (your local time)')).not.toHaveValue('')
	await expect(dialog.getByTestId('signature-statement')).toContainText(
		`I, Ilse Brandvold, approve version ${version} of specification ${DOC}`,
	)
	await sign(page, 'approved')
	await expectToast(page, 'Signed as approved')
	// The loader applies due effective dates, so the page after the redirect already shows Effective.
	await expectState(page, version, 'Effective')
}

test('[WF-E2E-001] a draft goes through redline, rejection, two signatures and a second version, and the mails go out', async ({
	page,
}) => {
	test.setTimeout(300_000)

	// 1. The author submits the ethyl acetate draft.
	await signIn(page, AUTHOR)
	await openFromSpecifications(page)
	await expectState(page, 1, 'Draft')
	await submitForReview(page, 1)
	await signOut(page)

	// 2. The reviewer finds it in My queue, redlines the scope with suggested text and rejects it to draft.
	await signIn(page, REVIEWER)
	await openFromQueue(page, 1, 'Review')
	const redlines = page.getByRole('region', { name: /Redlines/ })
	await redlines.getByLabel('About').selectOption({ label: 'Scope' })
	await redlines.getByLabel('Comment').fill('Say that every drum is tested, and which grade.')
	await redlines.getByLabel('Suggested replacement text (optional)').fill(SUGGESTED_SCOPE)
	await redlines.getByRole('button', { name: 'Add redline' }).click()
	await expectToast(page, 'Redline added')
	const thread = page.getByTestId('redline').filter({ hasText: 'Say that every drum is tested' })
	await expect(thread).toContainText('Open')
	await expect(thread).toContainText('Scope')
	await expect(thread).toContainText(SUGGESTED_SCOPE)
	// PRODUCT.md §3 / issue 5 item 2: a version with open redlines cannot be signed; the button says why.
	await expect(page.getByRole('button', { name: 'Sign as reviewed…' })).toBeDisabled()
	await expect(page.getByText('1 open redline must be resolved first.')).toBeVisible()
	await snapshot(page, 'review-redline-added')
	await page.getByLabel('Reason (required) to reject to draft').fill(REJECTION_REASON)
	await page.getByRole('button', { name: 'Reject to draft' }).click()
	await expectToast(page, 'Returned to draft')
	await expectState(page, 1, 'Draft')
	await signOut(page)

	// 3. The author sees the reason, accepts the suggestion in one click and resubmits.
	await signIn(page, AUTHOR)
	await openFromQueue(page, 1, 'Revise')
	await expect(page.getByText(`Returned to draft: ${REJECTION_REASON}`)).toBeVisible()
	await expect(page.getByLabel('Scope')).not.toHaveValue(SUGGESTED_SCOPE)
	await snapshot(page, 'review-returned-to-draft')
	await thread.getByRole('button', { name: 'Accept the suggestion' }).click()
	await expectToast(page, 'Suggestion accepted into the draft')
	await expect(page.getByLabel('Scope')).toHaveValue(SUGGESTED_SCOPE)
	await expect(thread).toContainText('Resolved')
	await expect(thread).toContainText('Resolved by Maren Oduya: Suggested text accepted')
	await submitForReview(page, 1)
	await signOut(page)

	// 4. The reviewer signs as reviewed: a wrong password first is refused and records nothing.
	// 21 CFR 11.200(a)(1) — FACTS.md §3.1: the signature needs the password; a failure signs nothing.
	await signIn(page, REVIEWER)
	await openFromQueue(page, 1, 'Review')
	const reviewDialog = page.getByRole('dialog', { name: 'Electronic signature: reviewed' })
	await page.getByRole('button', { name: 'Sign as reviewed…' }).click()
	await expect(reviewDialog.getByTestId('signature-statement')).toContainText(
		`I, Tomasz Wielgosz, have reviewed version 1 of specification ${DOC}`,
	)
	await snapshot(page, 'review-signing-dialog')
	await sign(page, 'reviewed', 'not-my-password')
	// The refusal shows inside the signing dialog, which stays open with the password cleared (21 CFR 11.200(a)).
	await expect(reviewDialog.getByRole('alert')).toContainText('The password is not right; nothing was signed.')
	await expect(reviewDialog.getByLabel('Your password')).toHaveValue('')
	await snapshot(page, 'review-wrong-password')
	await page.goto(page.url())
	await expectState(page, 1, 'In review')
	await expect(page.getByRole('region', { name: 'Signatures' })).toContainText('Not signed yet.')
	await expect(page.getByTestId('signature')).toHaveCount(0)
	await sign(page, 'reviewed')
	await expectToast(page, 'Signed as reviewed')
	await expect(page.getByTestId('signature')).toHaveCount(1)
	await signOut(page)

	// 5. The approver signs as approved, effective now.
	await signAsApproverEffectiveNow(page, 1)

	// 6. Both signatures show printed name, meaning, UTC time and the signer's zone (21 CFR 11.50(a)(1)–(3) — FACTS.md
	// §3.1), and the content still matches the hash that was signed (21 CFR 11.70 — FACTS.md §3.1).
	const reviewed = page.getByTestId('signature').filter({ hasText: 'Tomasz Wielgosz' })
	const approved = page.getByTestId('signature').filter({ hasText: 'Ilse Brandvold' })
	await expect(page.getByTestId('signature')).toHaveCount(2)
	await expect(reviewed).toContainText('Reviewed')
	await expect(reviewed).toContainText(UTC_STAMP)
	await expect(reviewed).toContainText(zoneStamp('Europe/Warsaw'))
	await expect(approved).toContainText('Approved')
	await expect(approved).toContainText(UTC_STAMP)
	await expect(approved).toContainText(zoneStamp('Europe/Oslo'))
	await page.getByRole('button', { name: 'Verify against the content' }).click()
	await expect(page).toHaveURL(/verify=1/)
	await expect(page.getByText('Content matches what was signed')).toHaveCount(2)
	await expect(page.getByText('Content differs from what was signed')).toHaveCount(0)
	await snapshot(page, 'review-version-1-effective')
	await signOut(page)

	// 7. Version 2: the author starts it with a reason and tightens the minimum correlation.
	await signIn(page, AUTHOR)
	await openFromSpecifications(page)
	await expectState(page, 1, 'Effective')
	await page.getByLabel('Reason for a new version').fill(NEW_VERSION_REASON)
	await page.getByRole('button', { name: 'Start a new version' }).click()
	await expectToast(page, 'Version 2 started as a draft')
	await expectState(page, 2, 'Draft')
	// EU GMP Annex 11 §9 — FACTS.md §3.2: the reason for the change is recorded with the version.
	await expect(page.getByLabel('Reason for this version')).toHaveValue(NEW_VERSION_REASON)
	await expect(page.getByLabel('Minimum correlation', { exact: true })).toHaveValue('0.95')
	await page.getByLabel('Minimum correlation', { exact: true }).fill('0.97')
	await page.getByRole('button', { name: 'Save draft' }).click()
	await expectToast(page, 'Draft saved')
	await expect(page.getByLabel('Minimum correlation', { exact: true })).toHaveValue('0.97')
	await submitForReview(page, 2)
	await signOut(page)

	await signAsReviewer(page, 2)
	await signAsApproverEffectiveNow(page, 2)

	// 8. Version 2 is effective and version 1 superseded, in the same step (issue 5 item 1).
	const history = page.getByRole('region', { name: 'Versions' })
	const row = (n: number) =>
		history.getByRole('listitem').filter({ has: page.getByRole('link', { name: `Version ${n}`, exact: true }) })
	await expect(row(2)).toContainText('Effective')
	await expect(row(1)).toContainText('Superseded')
	await expect(row(2)).toContainText(NEW_VERSION_REASON)
	await snapshot(page, 'review-version-2-effective')

	// 9. The tracked changes show the new minimum correlation.
	await row(2).getByRole('link', { name: 'Changes from version 1' }).click()
	await expect(page.getByRole('heading', { level: 1, name: `Changes in ${DOC}` })).toBeVisible()
	await expect(
		page.getByText(`Version 1 (Superseded) against version 2 (Effective) — reason: ${NEW_VERSION_REASON}`),
	).toBeVisible()
	const change = page
		.getByTestId('diff-field')
		.filter({ has: page.getByRole('rowheader', { name: 'Minimum correlation', exact: true }) })
	await expect(change).toHaveCount(1)
	await expect(change.locator('del')).toHaveText('0.95')
	await expect(change.locator('ins')).toHaveText('0.97')
	await snapshot(page, 'review-changes-v1-v2')
	await page.getByRole('button', { name: 'Side by side' }).click()
	await expect(change.getByRole('cell')).toHaveText(['0.95', '0.97'])
	await signOut(page)

	// 10. The administrator's Outgoing mail page: each notification queued and sent (the worker runs every 5 s).
	await signIn(page, ADMIN)
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Outgoing mail' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'Outgoing mail' })).toBeVisible()
	const expectedMail = [
		{ kind: 'Review requested', subject: `Review requested: ${DOC} version 1, ${TITLE}`, to: REVIEWER },
		{ kind: 'Redlines posted', subject: `Redlines posted: ${DOC} version 1, ${TITLE}`, to: AUTHOR },
		{ kind: 'Returned to draft', subject: `Returned to draft: ${DOC} version 1, ${TITLE}`, to: AUTHOR },
		{ kind: 'Ready for approval', subject: `Ready for approval: ${DOC} version 1, ${TITLE}`, to: APPROVER },
		{ kind: 'Approved', subject: `Approved: ${DOC} version 1, ${TITLE}`, to: AUTHOR },
		{ kind: 'Effective', subject: `Now effective: ${DOC} version 1, ${TITLE}`, to: AUTHOR },
		{ kind: 'Review requested', subject: `Review requested: ${DOC} version 2, ${TITLE}`, to: REVIEWER },
		{ kind: 'Ready for approval', subject: `Ready for approval: ${DOC} version 2, ${TITLE}`, to: APPROVER },
		{ kind: 'Approved', subject: `Approved: ${DOC} version 2, ${TITLE}`, to: AUTHOR },
		{ kind: 'Effective', subject: `Now effective: ${DOC} version 2, ${TITLE}`, to: AUTHOR },
	]
	await expect(async () => {
		await page.reload()
		const outbox = page.getByRole('table')
		for (const mail of expectedMail) {
			const mailRow = outbox.getByRole('row').filter({ hasText: mail.subject })
			await expect(mailRow.first(), mail.subject).toContainText(mail.kind, { timeout: 1_000 })
			await expect(mailRow.first(), mail.subject).toContainText(mail.to, { timeout: 1_000 })
			await expect(mailRow.first(), mail.subject).toContainText('Sent', { timeout: 1_000 })
		}
		const received = page.getByRole('list', { name: /newest messages received/ })
		for (const mail of expectedMail)
			await expect(received.getByRole('listitem').filter({ hasText: mail.subject }).first(), mail.subject).toBeVisible({
				timeout: 1_000,
			})
	}).toPass({ timeout: 45_000, intervals: [1_000, 2_000, 5_000] })

	// The rejection mail carries the reason as the author received it.
	const rejection = page
		.getByRole('list', { name: /newest messages received/ })
		.getByRole('listitem')
		.filter({ hasText: `Returned to draft: ${DOC} version 1` })
	await rejection.getByText(`Returned to draft: ${DOC} version 1`).click()
	await expect(rejection).toContainText(REJECTION_REASON)
	await snapshot(page, 'review-outgoing-mail')
})

test('[WF-E2E-002] the reviewer cannot sign the acetylsalicylic acid version while its redline is open', async ({
	page,
}) => {
	await signIn(page, REVIEWER)
	await page
		.getByRole('navigation', { name: 'Main' })
		.getByRole('link', { name: /My queue/ })
		.click()
	const item = page.getByTestId('queue-item').filter({ hasText: 'QC-IR-0003 v1' })
	await expect(item).toContainText('Review')
	await expect(item).toContainText('1 open redline')
	await item.getByRole('link', { name: 'QC-IR-0003 v1' }).click()
	await expect(
		page.getByRole('heading', { level: 1, name: 'Identification of acetylsalicylic acid by ATR-FTIR' }),
	).toBeVisible()
	// Issue 5 item 2 / PRODUCT.md §3: a version with open redlines cannot be signed; the disabled button says why.
	await expect(page.getByTestId('redline').filter({ hasText: 'Sample preparation' })).toContainText('Open')
	await expect(page.getByRole('button', { name: 'Sign as reviewed…' })).toBeDisabled()
	await expect(page.getByText('1 open redline must be resolved first.')).toBeVisible()
	await expect(page.getByText('A version with open redlines cannot be signed.')).toBeVisible()
	await snapshot(page, 'review-open-redline-blocks-signing')
})
