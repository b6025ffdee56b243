import { expect, signIn, signOut, snapshot, test } from './fixtures.ts'

const NAVIGATION_BY_ROLE = {
	'author@bandproof.test': {
		sees: ['Materials', 'Spectra', 'Specifications', 'My queue'],
		hidden: ['Users and roles', 'Inspection'],
	},
	'reviewer@bandproof.test': {
		sees: ['Materials', 'Specifications', 'My queue', 'Verify a copy'],
		hidden: ['Users and roles', 'Inspection'],
	},
	'approver@bandproof.test': { sees: ['Materials', 'My queue', 'Audit trail'], hidden: ['Users and roles'] },
	'inspector@bandproof.test': {
		// The whole audit trail is lab-internal: an inspector reads the extract of each granted version instead.
		sees: ['Inspection', 'Verify a copy'],
		hidden: ['Materials', 'Users and roles', 'My queue', 'Audit trail'],
	},
	'admin@bandproof.test': {
		sees: ['Materials', 'Audit trail', 'Users and roles', 'Outgoing mail'],
		hidden: ['Inspection'],
	},
} as const

for (const [email, expected] of Object.entries(NAVIGATION_BY_ROLE)) {
	test(`[AUTH-001] ${email} signs in and sees the navigation of their role`, async ({ page }) => {
		await signIn(page, email)
		const nav = page.getByRole('navigation', { name: 'Main' })
		await expect(nav.getByRole('link', { name: 'Overview' })).toBeVisible()
		for (const label of expected.sees) await expect(nav.getByRole('link', { name: label })).toBeVisible()
		for (const label of expected.hidden) await expect(nav.getByRole('link', { name: label })).toHaveCount(0)
		await expect(page.getByRole('list', { name: 'Your roles' })).toBeVisible()
		await snapshot(page, `overview-${email.split('@')[0]}`)
		for (const label of expected.sees) {
			await nav.getByRole('link', { name: label }).click()
			await expect(page.getByRole('heading', { level: 1 })).toBeVisible()
			await snapshot(page, `${email.split('@')[0]}-${label.toLowerCase().replace(/\s+/g, '-')}`)
		}
		await signOut(page)
	})
}

test('[AUTH-002] an inspector asking for the admin page gets 403 from the server', async ({ page }) => {
	await signIn(page, 'inspector@bandproof.test')
	await expect(page.getByRole('navigation', { name: 'Main' })).toBeVisible()
	const response = await page.goto('/admin/users')
	expect(response?.status()).toBe(403)
	await expect(page.getByRole('heading', { name: 'You do not have access to this page' })).toBeVisible()
	// The data request a client-side navigation would make is refused too, not only the HTML page.
	const dataResponse = await page.request.get('/admin/users.data')
	expect(dataResponse.status()).toBe(403)
	// Drafts are never shown to an inspector, even by typing the address (PRODUCT.md §2).
	expect((await page.goto('/specifications'))?.status()).toBe(403)
	await snapshot(page, 'inspector-403')
})

test('[AUTH-003] a visitor who is not signed in is sent to sign in, and an unknown page is a 404', async ({ page }) => {
	await page.goto('/materials')
	await expect(page).toHaveURL(/\/sign-in\?redirectTo=%2Fmaterials/)
	const response = await page.goto('/no-such-page')
	expect(response?.status()).toBe(404)
	await expect(page.getByRole('heading', { name: 'Page not found' })).toBeVisible()
	await snapshot(page, 'not-found')
})

test('[AUTH-004] a wrong password is refused with a message, and the e-mail typed is kept', async ({ page }) => {
	await signIn(page, 'reviewer@bandproof.test', 'not-the-password')
	await expect(page.getByRole('alert')).toContainText('The e-mail or the password is not right')
	await expect(page.getByLabel('E-mail')).toHaveValue('reviewer@bandproof.test')
	await snapshot(page, 'sign-in-refused')
})
