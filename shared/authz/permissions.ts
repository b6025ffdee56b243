/**
 * Who may do what. Pure and shared: the server enforces it (app/.server/context.ts is the only place that
 * answers 403) and the UI uses the same map to decide what to show.
 */
export const ROLES = ['author', 'reviewer', 'approver', 'analyst', 'inspector', 'admin'] as const
export type Role = (typeof ROLES)[number]

export const ROLE_LABELS: Record<Role, string> = {
	author: 'Author',
	reviewer: 'Reviewer',
	approver: 'Approver',
	analyst: 'Analyst',
	inspector: 'Inspector',
	admin: 'Administrator',
}

export const ROLE_DUTIES: Record<Role, string> = {
	author: 'Drafts specifications, uploads spectra, builds band tables',
	reviewer: 'Redlines drafts and signs them as reviewed',
	approver: 'Signs approval and sets the effective date',
	analyst: "Checks instruments, tests incoming lots container by container and verifies colleagues' runs",
	inspector: 'Reads effective and historical records during an access grant',
	admin: 'Manages users, roles, grants, templates and settings',
}

const LAB_STAFF = ['author', 'reviewer', 'approver', 'analyst', 'admin'] as const

const grants = {
	'workspace:enter': ['author', 'reviewer', 'approver', 'analyst', 'inspector', 'admin'],
	'material:read': LAB_STAFF,
	'material:edit': ['author', 'admin'],
	'spectrum:read': LAB_STAFF,
	'spectrum:upload': ['author', 'admin'],
	// Inspectors read released versions only, through their access grants (the inspection area), never drafts.
	'spec:read': LAB_STAFF,
	'dossier:verify': ['author', 'reviewer', 'approver', 'analyst', 'inspector', 'admin'],
	'spec:create': ['author'],
	'spec:edit': ['author'],
	'spec-version:sign': ['reviewer', 'approver'],
	'queue:read': ['author', 'reviewer', 'approver'],
	// The whole trail is lab-internal (drafts, accounts, addresses). Inspectors read the extract of each version their
	// grant covers, on its inspection page, and nothing once the grant has ended.
	'audit:read': ['admin', 'approver'],
	'inspection:read': ['inspector'],
	'user:manage': ['admin'],
	'grant:manage': ['admin'],
	'mailbox:read': ['admin'],
	// Everyone signed in may hold personal API keys; an inspector's keys are read-only (see apiKeyScopesFor).
	'api-key:manage': ['author', 'reviewer', 'approver', 'analyst', 'inspector', 'admin'],
	// Release testing of incoming lots. Recording and signing a run is the analyst's; a second person verifies it
	// (never the one who performed it, enforced in shared/runs/run-rules.ts); QA approvers close investigations.
	'instrument:read': LAB_STAFF,
	'instrument:manage': ['analyst', 'admin'],
	'instrument-check:record': ['analyst'],
	'run:read': LAB_STAFF,
	'run:record': ['analyst'],
	'run:verify': ['analyst', 'reviewer', 'approver'],
	'investigation:close': ['approver'],
} as const satisfies Record<string, ReadonlyArray<Role>>

export type Permission = keyof typeof grants

export type Actor = { id: string; name: string; email: string; roles: ReadonlyArray<Role> }

/** True when any of the actor's roles carries the permission. */
export function can(actor: { roles: ReadonlyArray<Role> } | null | undefined, permission: Permission): boolean {
	if (!actor) return false
	const allowed: ReadonlyArray<Role> = grants[permission]
	return actor.roles.some((role) => allowed.includes(role))
}

/** Roles that may only read: their non-GET requests are refused before any action runs. */
export function isReadOnly(actor: { roles: ReadonlyArray<Role> }): boolean {
	return actor.roles.length > 0 && actor.roles.every((role) => role === 'inspector')
}

export const API_KEY_SCOPES = ['read', 'write'] as const
export type ApiKeyScope = (typeof API_KEY_SCOPES)[number]

/** The scopes an actor may give their own API keys: read-only roles get read keys only. */
export function apiKeyScopesFor(actor: { roles: ReadonlyArray<Role> }): ReadonlyArray<ApiKeyScope> {
	return isReadOnly(actor) ? ['read'] : API_KEY_SCOPES
}
