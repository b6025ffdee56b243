import type { Page } from '@playwright/test'
import { expect, signIn, signOut, snapshot, test, uniqueEmail } from './fixtures.ts'

async function createAccount(page: Page, name: string, email: string, password: string, role: string) {
	await page.goto('/admin/users/new')
	await page.getByLabel('Full name').fill(name)
	await page.getByLabel('E-mail').fill(email)
	await page.getByLabel('Initial password').fill(password)
	await page.getByRole('checkbox', { name: new RegExp(`^${role}`) }).check()
	await page.getByRole('button', { name: 'Create account' }).click()
	await expect(page.getByRole('heading', { level: 1, name })).toBeVisible()
}

test('[USR-001] the admin creates an account with a role, and the new person signs in with it', async ({ page }) => {
	const email = uniqueEmail('new-reviewer')
	await signIn(page, 'admin@bandproof.test')
	await page.getByRole('link', { name: 'Users and roles' }).click()
	await snapshot(page, 'admin-users')
	await page.getByRole('link', { name: 'Create an account' }).click()
	// A form with mistakes: errors show beside the fields and nothing typed is lost.
	await page.getByLabel('Full name').fill('Oskar Lindqvist')
	await page.getByLabel('E-mail').fill(email)
	await page.getByLabel('Initial password').fill('short')
	await page.getByRole('button', { name: 'Create account' }).click()
	await expect(page.getByText('The password needs at least 10 characters')).toBeVisible()
	await expect(page.getByText('Give the account at least one role')).toBeVisible()
	await expect(page.getByLabel('Full name')).toHaveValue('Oskar Lindqvist')
	await snapshot(page, 'admin-new-user-errors')
	await page.getByLabel('Initial password').fill('a-good-long-password')
	await page.getByRole('checkbox', { name: /^Reviewer/ }).check()
	await page.getByRole('button', { name: 'Create account' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'Oskar Lindqvist' })).toBeVisible()
	await expect(page.getByRole('checkbox', { name: /^Reviewer/ })).toBeChecked()
	// Give a second role.
	await page.getByRole('checkbox', { name: /^Approver/ }).check()
	await page.getByRole('button', { name: 'Save roles' }).click()
	await expect(page.getByText('Roles saved')).toBeVisible()
	await snapshot(page, 'admin-user-page')
	await signOut(page)

	await signIn(page, email, 'a-good-long-password')
	await expect(page.getByTestId('user-name')).toHaveText('Oskar Lindqvist')
	const roles = page.getByRole('list', { name: 'Your roles' })
	await expect(roles).toContainText('Reviewer')
	await expect(roles).toContainText('Approver')
	await signOut(page)

	// The role change is in the audit trail.
	await signIn(page, 'admin@bandproof.test')
	await page.goto('/audit?action=user.roles')
	await expect(page.getByRole('cell', { name: 'user.roles-changed' }).first()).toBeVisible()
	await snapshot(page, 'audit-trail')
})

test('[USR-002] repeated wrong passwords lock an account; the right password is then refused too', async ({ page }) => {
	const email = uniqueEmail('lockout')
	await signIn(page, 'admin@bandproof.test')
	await createAccount(page, 'Lotte Akerman', email, 'the-right-password', 'Author')
	await signOut(page)

	// Five failures lock the account (LOCKOUT_THRESHOLD default; common practice, no source).
	for (let attempt = 1; attempt <= 5; attempt++) {
		await signIn(page, email, `wrong-password-${attempt}`)
		await expect(page.getByRole('alert')).toContainText('not right')
	}
	await signIn(page, email, 'the-right-password')
	await expect(page.getByRole('alert')).toContainText('This account is locked')
	await snapshot(page, 'sign-in-locked')

	await signIn(page, 'admin@bandproof.test')
	await page.getByRole('link', { name: 'Users and roles' }).click()
	await expect(page.getByRole('row', { name: /Lotte Akerman/ })).toContainText('Locked')
	await page.getByRole('link', { name: 'Lotte Akerman' }).click()
	await page.getByRole('button', { name: 'Unlock now' }).click()
	await expect(page.getByText('Account unlocked')).toBeVisible()
	await page.goto('/audit?action=user.')
	await expect(page.getByRole('cell', { name: 'user.locked' }).first()).toBeVisible()
	await expect(page.getByRole('cell', { name: 'user.sign-in-failed' }).first()).toBeVisible()
	await signOut(page)
	await signIn(page, email, 'the-right-password')
	await expect(page.getByTestId('user-name')).toHaveText('Lotte Akerman')
})
