/**
 * Inspector access grants: pure rules of what a grant covers and when. Inside its window a grant shows the
 * released versions (effective, superseded, retired) of the specifications it names (or of all); outside it,
 * nothing. Pure: the time is an argument.
 */
export type GrantWindow = {
	allSpecifications: boolean
	specificationIds: ReadonlyArray<string>
	startsAt: Date
	endsAt: Date
	revokedAt: Date | null
}

/** States an inspector may see: what has been released, never drafts or versions still in review. */
export const RELEASED_STATES = ['effective', 'superseded', 'retired'] as const

export type GrantStatus = 'scheduled' | 'current' | 'ended' | 'revoked'

export function grantStatus(grant: GrantWindow, now: Date): GrantStatus {
	if (grant.revokedAt && grant.revokedAt <= now) return 'revoked'
	if (now < grant.startsAt) return 'scheduled'
	if (now >= grant.endsAt) return 'ended'
	return 'current'
}

/** True when some current grant covers the specification. */
export function grantsCover(grants: ReadonlyArray<GrantWindow>, specificationId: string, now: Date): boolean {
	return grants.some(
		(grant) =>
			grantStatus(grant, now) === 'current' &&
			(grant.allSpecifications || grant.specificationIds.includes(specificationId)),
	)
}

/** True when an inspector may see a version in this state of a covered specification. */
export function isReleased(state: string): boolean {
	return (RELEASED_STATES as ReadonlyArray<string>).includes(state)
}
