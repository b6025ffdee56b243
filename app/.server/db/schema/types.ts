import { customType } from 'drizzle-orm/pg-core'

/** PostgreSQL bytea as a Uint8Array (postgres.js hands back a Buffer, which is one). */
export const bytea = customType<{ data: Uint8Array; driverData: Uint8Array }>({
	dataType() {
		return 'bytea'
	},
	toDriver(value) {
		return Buffer.from(value.buffer, value.byteOffset, value.byteLength)
	},
	fromDriver(value) {
		return new Uint8Array(value.buffer, value.byteOffset, value.byteLength)
	},
})
