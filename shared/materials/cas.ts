/**
 * CAS Registry Numbers: up to ten digits in three parts, NNNNNNN-NN-R, where R is a check digit.
 * The check digit is the sum of each preceding digit times its position counted from the right
 * (the digit just before R has position 1), modulo 10 — the method published by CAS.
 */
const CAS_PATTERN = /^(\d{2,7})-(\d{2})-(\d)$/

export type CasCheck =
	{ valid: true; normalized: string } | { valid: false; reason: 'format' | 'check-digit'; expectedCheckDigit?: number }

/** The check digit CAS would give the digits before it (a string of digits, hyphens ignored). */
export function casCheckDigit(digitsBeforeCheck: string): number {
	const digits = digitsBeforeCheck.replace(/-/g, '')
	let sum = 0
	for (let position = 1; position <= digits.length; position++) {
		sum += position * Number(digits[digits.length - position])
	}
	return sum % 10
}

/** Validates format and check digit; leading zeros in the first part are not allowed. */
export function checkCasNumber(input: string): CasCheck {
	const value = input.trim()
	const match = CAS_PATTERN.exec(value)
	if (!match || match[1]!.startsWith('0')) return { valid: false, reason: 'format' }
	const expected = casCheckDigit(match[1]! + match[2]!)
	if (expected !== Number(match[3])) return { valid: false, reason: 'check-digit', expectedCheckDigit: expected }
	return { valid: true, normalized: value }
}

/** The message shown beside a CAS field for a value that fails the check. */
export function casErrorMessage(check: Extract<CasCheck, { valid: false }>): string {
	return check.reason === 'format'
		? 'A CAS Registry Number looks like 50-78-2: two to seven digits, two digits, one check digit.'
		: `The check digit does not match: for these digits it should be ${check.expectedCheckDigit}. Check the number against the supplier's certificate.`
}
