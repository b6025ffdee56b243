import { expect, test } from 'vitest'
import { decideSignInGate, lockUntilAfterFailure } from '#shared/authz/sign-in-gate.ts'
import { can, isReadOnly, type Permission, type Role } from '#shared/authz/permissions.ts'

const as = (...roles: Array<Role>) => ({ roles })

// The role duties of the product brief (PRODUCT.md §2); segregation of duties and read-only inspectors
// follow 21 CFR 11.10(d) and EU GMP Annex 11 §12 (FACTS.md).
const EXPECTED: Array<[Permission, Array<Role>]> = [
	['material:edit', ['author', 'admin']],
	['user:manage', ['admin']],
	['spec-version:sign', ['reviewer', 'approver']],
	['inspection:read', ['inspector']],
	['mailbox:read', ['admin']],
	// Inspectors never read drafts: released versions reach them through access grants only (PRODUCT.md §2).
	['spec:read', ['author', 'reviewer', 'approver', 'admin']],
	['dossier:verify', ['author', 'reviewer', 'approver', 'inspector', 'admin']],
	// The whole trail shows drafts, accounts and addresses: inspectors get per-version extracts through their grant.
	['audit:read', ['approver', 'admin']],
]
const ALL: Array<Role> = ['author', 'reviewer', 'approver', 'inspector', 'admin']

test.each(EXPECTED)('[AUTHZ-001] %s is granted to exactly %j', (permission, roles) => {
	expect(ALL.filter((role) => can(as(role), permission))).toEqual(roles)
})

test('[AUTHZ-002] a user with several roles holds the union of their permissions', () => {
	expect(can(as('reviewer', 'admin'), 'user:manage')).toBe(true)
	expect(can(as('reviewer', 'admin'), 'spec-version:sign')).toBe(true)
	expect(can(as(), 'workspace:enter')).toBe(false)
	expect(can(null, 'workspace:enter')).toBe(false)
})

test('[AUTHZ-003] only an inspector-only account is read-only', () => {
	expect(isReadOnly(as('inspector'))).toBe(true)
	expect(isReadOnly(as('inspector', 'author'))).toBe(false)
	expect(isReadOnly(as('admin'))).toBe(false)
})

test('[AUTH-010] lock-out starts at the threshold and lasts the configured minutes', () => {
	const now = new Date('2026-01-01T10:00:00Z')
	const policy = { threshold: 5, minutes: 30 }
	expect(lockUntilAfterFailure(4, now, policy)).toBeNull()
	expect(lockUntilAfterFailure(5, now, policy)?.toISOString()).toBe('2026-01-01T10:30:00.000Z')
	expect(decideSignInGate({ deactivatedAt: null, lockedUntil: new Date('2026-01-01T10:30:00Z') }, now).ok).toBe(false)
	expect(decideSignInGate({ deactivatedAt: null, lockedUntil: new Date('2026-01-01T09:59:00Z') }, now).ok).toBe(true)
	expect(decideSignInGate({ deactivatedAt: now, lockedUntil: null }, now)).toMatchObject({ ok: false })
	expect(decideSignInGate(null, now).ok).toBe(true)
})
