import { expect, test } from 'vitest'
import {
	SIGN_IN_LIMIT_PER_ADDRESS,
	SIGN_IN_LIMIT_PER_EMAIL,
	signInSucceeded,
	takeSignInAttempt,
} from '#app/.server/security/sign-in-limits.ts'

// The limiter is one per process, so each test uses addresses and e-mails of its own.
const from = (address: string) => new Headers({ 'X-Forwarded-For': address })

test('[SEC-050] ten attempts a minute from one address, for any e-mails; the eleventh is refused with a wait', () => {
	expect(SIGN_IN_LIMIT_PER_ADDRESS).toEqual({ max: 10, windowMs: 60_000 })
	const now = 1_000_000
	for (let n = 1; n <= 10; n++)
		expect(takeSignInAttempt(`a${n}@x.test`, from('198.51.100.1'), now + n)).toEqual({ allowed: true })
	const refused = takeSignInAttempt('a11@x.test', from('198.51.100.1'), now + 11)
	expect(refused).toMatchObject({ allowed: false, retryAfterSeconds: 60 })
	expect(refused.allowed ? '' : refused.message).toBe('Too many sign-in attempts. Wait 60 seconds and try again.')
	// Another address is not held up, nor is the e-mail the refused attempt named (it was not counted).
	expect(takeSignInAttempt('a11@x.test', from('198.51.100.2'), now + 12)).toEqual({ allowed: true })
	// A minute after the first attempt, the address may try again.
	expect(takeSignInAttempt('a12@x.test', from('198.51.100.1'), now + 60_001)).toEqual({ allowed: true })
})

test('[SEC-051] ten attempts a minute for one e-mail, from any addresses (or none known); case does not matter', () => {
	expect(SIGN_IN_LIMIT_PER_EMAIL).toEqual({ max: 10, windowMs: 60_000 })
	const now = 2_000_000
	for (let n = 1; n <= 10; n++) {
		const headers = n % 2 ? from(`203.0.113.${n}`) : undefined
		expect(takeSignInAttempt(n % 3 ? 'Target@X.test' : 'target@x.test', headers, now + n)).toEqual({ allowed: true })
	}
	expect(takeSignInAttempt('target@x.test', from('203.0.113.99'), now + 11)).toMatchObject({ allowed: false })
	// The address of the refused attempt was given back: it still has its ten.
	for (let n = 1; n <= 10; n++)
		expect(takeSignInAttempt(`other${n}@x.test`, from('203.0.113.99'), now + 20 + n).allowed).toBe(true)
})

test('[SEC-052] a successful sign-in gives its attempt back: people who type the right password are never held up', () => {
	const now = 3_000_000
	for (let n = 1; n <= 25; n++) {
		expect(takeSignInAttempt('lab-user@x.test', from('192.0.2.50'), now + n)).toEqual({ allowed: true })
		signInSucceeded('lab-user@x.test', from('192.0.2.50'))
	}
	// Failures still count: ten wrong passwords use up the minute, and the next attempt is refused.
	for (let n = 1; n <= 10; n++)
		expect(takeSignInAttempt('lab-user@x.test', from('192.0.2.50'), now + 100 + n).allowed).toBe(true)
	expect(takeSignInAttempt('lab-user@x.test', from('192.0.2.50'), now + 200).allowed).toBe(false)
})
