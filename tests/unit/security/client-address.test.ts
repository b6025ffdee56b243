import { expect, test } from 'vitest'
import { addressKey, forwardedClientAddress } from '#app/.server/security/client-address.ts'

const forwarded = (value: string) => new Headers({ 'X-Forwarded-For': value })

test('[SEC-010] the client address is the rightmost X-Forwarded-For entry, the one the proxy appended', () => {
	expect(forwardedClientAddress(forwarded('198.51.100.7'))).toBe('198.51.100.7')
	// The client sent "1.2.3.4" itself to pick another bucket; the proxy appended what it saw.
	expect(forwardedClientAddress(forwarded('1.2.3.4, 203.0.113.9'))).toBe('203.0.113.9')
	expect(forwardedClientAddress(forwarded(' 1.2.3.4 ,203.0.113.9 '))).toBe('203.0.113.9')
})

test('[SEC-011] without the header, or with something that is not an address, the address is unknown', () => {
	expect(forwardedClientAddress(new Headers())).toBeNull()
	expect(forwardedClientAddress(undefined)).toBeNull()
	expect(forwardedClientAddress(forwarded('unknown'))).toBeNull()
	expect(forwardedClientAddress(forwarded('1.2.3.4, '))).toBeNull()
	expect(addressKey('256.1.1.1')).toBeNull()
	expect(addressKey('1.2.3')).toBeNull()
	expect(addressKey('1:2:3:4:5:6:7:8:9')).toBeNull()
	expect(addressKey('1::2::3')).toBeNull()
	expect(addressKey('g::1')).toBeNull()
})

test('[SEC-012] IPv6 addresses count by their /64; IPv4-mapped ones as IPv4; brackets, ports and zones are dropped', () => {
	// RFC 3849 documentation prefix 2001:db8::/32.
	expect(addressKey('2001:db8:0:1:aaaa:bbbb:cccc:dddd')).toBe('2001:db8:0:1::/64')
	expect(addressKey('2001:DB8:0:1::1')).toBe('2001:db8:0:1::/64')
	expect(addressKey('2001:db8:0:2::1')).toBe('2001:db8:0:2::/64')
	expect(addressKey('[2001:db8::1]:443')).toBe('2001:db8:0:0::/64')
	expect(addressKey('::1')).toBe('0:0:0:0::/64')
	expect(addressKey('fe80::1%eth0')).toBe('fe80:0:0:0::/64')
	expect(addressKey('::ffff:198.51.100.7')).toBe('198.51.100.7')
	expect(addressKey('0:0:0:0:0:ffff:198.51.100.7')).toBe('198.51.100.7')
})
