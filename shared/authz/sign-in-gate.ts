import { err, ok, type Result } from '#shared/errors.ts'

type AccountState = { deactivatedAt: Date | null; lockedUntil: Date | null }

/** The message shown for a locked account; deliberately says what to do next. */
export function lockedMessage(until: Date): string {
	return `This account is locked after repeated failed sign-ins until ${until.toISOString().slice(11, 16)} UTC. Ask an administrator to unlock it sooner.`
}

/**
 * Whether an account may attempt to sign in at `now`. Unknown e-mails pass the gate (the password check
 * then fails as usual, so the response does not reveal which e-mails exist).
 */
export function decideSignInGate(account: AccountState | null, now: Date): Result<true, string> {
	if (!account) return ok(true)
	if (account.deactivatedAt) return err('This account is deactivated. Ask an administrator if you need access again.')
	if (account.lockedUntil && account.lockedUntil > now) return err(lockedMessage(account.lockedUntil))
	return ok(true)
}

/**
 * After a failed password, the time until which the account is locked, or null when still below the threshold.
 * `failedSignIns` is the count including this failure.
 */
export function lockUntilAfterFailure(
	failedSignIns: number,
	now: Date,
	policy: { threshold: number; minutes: number },
): Date | null {
	if (failedSignIns < policy.threshold) return null
	return new Date(now.getTime() + policy.minutes * 60_000)
}
