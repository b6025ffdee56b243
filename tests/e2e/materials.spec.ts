import { expect, signIn, snapshot, test } from './fixtures.ts'

test('[MAT-001] a wrong CAS check digit is refused with the message beside the field, and the typing survives', async ({
	page,
}) => {
	await signIn(page, 'author@bandproof.test')
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Materials' }).click()
	await expect(page.getByRole('row', { name: /RM-0101/ })).toBeVisible()
	await snapshot(page, 'materials-list')
	await page.getByRole('link', { name: 'Register a material' }).click()
	await page.getByLabel('Material code').fill('RM-0150')
	await page.getByLabel('Name').fill('Salicylic acid')
	// 69-72-7 is salicylic acid's CAS RN; 69-72-8 breaks its check digit (CAS check-digit method).
	await page.getByLabel('CAS Registry Number').fill('69-72-8')
	await page.getByRole('button', { name: 'Register material' }).click()
	const cas = page.getByLabel('CAS Registry Number')
	await expect(cas).toHaveAttribute('aria-invalid', 'true')
	const describedBy = await cas.getAttribute('aria-describedby')
	expect(describedBy).toBeTruthy()
	await expect(page.locator(`[id="${describedBy!.split(' ')[0]}"]`)).toContainText('it should be 7')
	await expect(page.getByLabel('Name')).toHaveValue('Salicylic acid')
	await snapshot(page, 'material-cas-error')
	await cas.fill('69-72-7')
	await page.getByRole('button', { name: 'Register material' }).click()
	await expect(page.getByRole('heading', { level: 1, name: 'RM-0150 · Salicylic acid' })).toBeVisible()
	await expect(page.getByText('Material registered')).toBeVisible()
})

test('[MAT-002] without JavaScript the server itself refuses the wrong check digit and keeps the values', async ({
	browser,
}) => {
	const context = await browser.newContext({ javaScriptEnabled: false })
	const page = await context.newPage()
	await signIn(page, 'author@bandproof.test')
	await page.goto('/materials/new')
	await page.getByLabel('Material code').fill('RM-0151')
	await page.getByLabel('Name').fill('Benzoic acid')
	await page.getByLabel('CAS Registry Number').fill('65-85-1')
	const [response] = await Promise.all([
		page.waitForResponse((r) => r.url().endsWith('/materials/new') && r.request().method() === 'POST'),
		page.getByRole('button', { name: 'Register material' }).click(),
	])
	expect(response.status()).toBe(400)
	await expect(page.getByText('it should be 0')).toBeVisible()
	await expect(page.getByLabel('Name')).toHaveValue('Benzoic acid')
	await expect(page.getByLabel('CAS Registry Number')).toHaveValue('65-85-1')
	await context.close()
})

test('[MAT-003] the list filters, sorts and pages on the server', async ({ page }) => {
	await signIn(page, 'reviewer@bandproof.test')
	await page.goto('/materials?q=acid')
	await expect(page.getByRole('row', { name: /Acetylsalicylic acid/ })).toBeVisible()
	await expect(page.getByRole('row', { name: /Paracetamol/ })).toHaveCount(0)
	await page.goto('/materials?sort=code&dir=desc')
	const firstCode = page.locator('tbody tr').first().locator('td').first()
	await expect(firstCode).toHaveText(/RM-01[0-9]{2}/)
	const codes = await page.locator('tbody tr td:first-child').allTextContents()
	expect(codes).toEqual([...codes].sort().reverse())
	// A reviewer reads but cannot register.
	await expect(page.getByRole('link', { name: 'Register a material' })).toHaveCount(0)
	const response = await page.goto('/materials/new')
	expect(response?.status()).toBe(403)
})
