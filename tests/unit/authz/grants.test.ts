import { expect, test } from 'vitest'
import { grantsCover, grantStatus, isReleased } from '#shared/authz/grants.ts'

const window = (overrides: Partial<Parameters<typeof grantStatus>[0]> = {}) => ({
	allSpecifications: false,
	specificationIds: ['spec-a'],
	startsAt: new Date('2026-12-01T00:00:00Z'),
	endsAt: new Date('2026-12-15T00:00:00Z'),
	revokedAt: null,
	...overrides,
})

// Time-boxed read-only access for inspectors: PRODUCT.md §2 and §7 (EU GMP Annex 11 §12 access control — FACTS.md).
test('[INS-010] a grant is scheduled, current, then ended; a revocation ends it at once', () => {
	expect(grantStatus(window(), new Date('2026-11-30T23:59:59Z'))).toBe('scheduled')
	expect(grantStatus(window(), new Date('2026-12-01T00:00:00Z'))).toBe('current')
	expect(grantStatus(window(), new Date('2026-12-15T00:00:00Z'))).toBe('ended')
	expect(grantStatus(window({ revokedAt: new Date('2026-12-05T00:00:00Z') }), new Date('2026-12-06T00:00:00Z'))).toBe(
		'revoked',
	)
})

test('[INS-011] a current grant covers its chosen specifications, or all of them', () => {
	const now = new Date('2026-12-02T12:00:00Z')
	expect(grantsCover([window()], 'spec-a', now)).toBe(true)
	expect(grantsCover([window()], 'spec-b', now)).toBe(false)
	expect(grantsCover([window({ allSpecifications: true, specificationIds: [] })], 'spec-b', now)).toBe(true)
	expect(grantsCover([window()], 'spec-a', new Date('2027-01-01T00:00:00Z'))).toBe(false)
})

test('[INS-012] inspectors see released versions only, never drafts or versions in review', () => {
	expect(['draft', 'in_review', 'approved', 'effective', 'superseded', 'retired'].filter(isReleased)).toEqual([
		'effective',
		'superseded',
		'retired',
	])
})
