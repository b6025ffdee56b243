import { test as base, expect, type Page } from '@playwright/test'

export const DEMO_PASSWORD = 'calder-vale-demo'

/** Every page in every test is watched: an error in the browser console fails the test. */
export const test = base.extend<{ consoleErrors: Array<string> }>({
	consoleErrors: [
		async ({ page }, use) => {
			const errors: Array<string> = []
			page.on('console', (message) => {
				if (message.type() !== 'error') return
				// Chromium itself logs every 4xx answer: a refused form or upload (400, 401, 409, 413, 422) or a refused page (403, 404) that a
				// test provokes on purpose. Those are HTTP statuses, not errors of the page's code, so they pass.
				if (/Failed to load resource: the server responded with a status of 4\d\d/.test(message.text())) return
				errors.push(message.text())
			})
			page.on('pageerror', (error) => errors.push(error.message))
			await use(errors)
			expect(errors, 'browser console errors').toEqual([])
		},
		{ auto: true },
	],
})

export { expect }

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
	await page.goto('/sign-in')
	await page.getByLabel('E-mail').fill(email)
	await page.getByLabel('Password').fill(password)
	await page.getByRole('button', { name: 'Sign in' }).click()
	// Settled: either signed in (the navigation shows) or refused (the alert shows).
	await expect(page.getByRole('navigation', { name: 'Main' }).or(page.getByRole('alert'))).toBeVisible()
}

export async function signOut(page: Page) {
	await page.getByRole('button', { name: 'Sign out' }).click()
	await expect(page.getByRole('heading', { name: 'Sign in' })).toBeVisible()
}

/** Saves a full-page screenshot to the git-ignored screenshots/ folder for people to look at. */
export async function snapshot(page: Page, name: string) {
	await page.screenshot({ path: `screenshots/${name}.png`, fullPage: true })
}

/** A unique e-mail per run, so journeys that create accounts never collide. */
export function uniqueEmail(prefix: string): string {
	return `${prefix}-${Date.now().toString(36)}${Math.floor(Math.random() * 1e4)}@bandproof.test`
}
