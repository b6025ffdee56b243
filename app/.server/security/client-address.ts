/**
 * The client's address as a rate-limit key.
 *
 * The app server does not see the socket address (react-router-serve hands the app a Request without it), so the
 * address comes from X-Forwarded-For, set by the reverse proxy in front of Bandproof. The RIGHTMOST entry is the one
 * that proxy appended (the address it saw); entries to its left were sent by the client and can be anything. With no
 * proxy in front, a client can choose this header freely: the per-address limit then means little, and the per-e-mail
 * limit and the account lock-out are what stand. Without the header the address is unknown (null) and callers skip
 * per-address limits rather than put every client in one bucket, which would let one client lock out everyone.
 */
export function forwardedClientAddress(headers: Headers | undefined): string | null {
	const forwarded = headers?.get('x-forwarded-for')
	if (!forwarded) return null
	const last = forwarded.split(',').at(-1)?.trim() ?? ''
	return addressKey(last)
}

/**
 * A normalised key for an IP address, or null when it is not one: IPv4 as is; IPv4-mapped IPv6 as IPv4; other IPv6
 * addresses by their /64 prefix, because one household or server usually holds a whole /64 and could otherwise
 * rotate through 2^64 keys. Pure.
 */
export function addressKey(raw: string): string | null {
	const value = raw.trim().replace(/^\[(.*)\](?::\d+)?$/, '$1')
	if (isIPv4(value)) return value
	const mapped = /^(?:::|(?:0{1,4}:){5})ffff:([\d.]+)$/i.exec(value)?.[1]
	if (mapped && isIPv4(mapped)) return mapped
	const groups = expandIPv6(value)
	return groups ? `${groups.slice(0, 4).join(':')}::/64` : null
}

function isIPv4(value: string): boolean {
	const parts = value.split('.')
	return parts.length === 4 && parts.every((part) => /^\d{1,3}$/.test(part) && Number(part) <= 255)
}

/** The eight hextets of an IPv6 address (lower case, no leading zeros), or null. A zone id (%eth0) is dropped. */
function expandIPv6(value: string): Array<string> | null {
	const address = value.split('%')[0] ?? ''
	if (!/^[0-9a-f:]+$/i.test(address) || address.length > 39) return null
	const halves = address.split('::')
	if (halves.length > 2) return null
	const head = halves[0] ? halves[0].split(':') : []
	const tail = halves.length === 2 && halves[1] ? halves[1].split(':') : []
	const missing = 8 - head.length - tail.length
	if (halves.length === 1 ? missing !== 0 : missing < 1) return null
	const groups = [...head, ...Array<string>(halves.length === 2 ? missing : 0).fill('0'), ...tail]
	if (groups.some((group) => !/^[0-9a-f]{1,4}$/i.test(group))) return null
	return groups.map((group) => Number.parseInt(group, 16).toString(16))
}
