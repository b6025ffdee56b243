/**
 * Just enough ZIP to make office files reproducible: read the entries of an archive, and write them back with one
 * fixed timestamp, in the same order, DEFLATE-compressed. (Office files are ZIP archives whose entries carry the
 * time they were packed, so two packs of the same document differ unless the times are fixed.)
 */
import { crc32, deflateRawSync, inflateRawSync } from 'node:zlib'

/**
 * One file of an archive. `raw` is the entry as it was stored (compression method, CRC-32 and the stored bytes) when
 * read from an archive; writing reuses it instead of compressing `data` again. Drop it when `data` changes.
 */
export type ZipEntry = {
	name: string
	data: Uint8Array
	raw: { method: number; crc: number; bytes: Uint8Array } | null
}

const LOCAL_HEADER = 0x04034b50
const CENTRAL_HEADER = 0x02014b50
const END_OF_CENTRAL_DIRECTORY = 0x06054b50

/** Entries of a ZIP archive in central-directory order. Supports stored and DEFLATE entries, no ZIP64. */
export function readZip(bytes: Uint8Array): Array<ZipEntry> {
	const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength)
	let end = -1
	for (let i = bytes.length - 22; i >= Math.max(0, bytes.length - 22 - 65_535); i--) {
		if (view.getUint32(i, true) === END_OF_CENTRAL_DIRECTORY) {
			end = i
			break
		}
	}
	if (end < 0) throw new Error('Not a ZIP archive: no end of central directory')
	const count = view.getUint16(end + 10, true)
	let offset = view.getUint32(end + 16, true)
	const entries: Array<ZipEntry> = []
	const decoder = new TextDecoder()
	for (let k = 0; k < count; k++) {
		if (view.getUint32(offset, true) !== CENTRAL_HEADER) throw new Error('Corrupt ZIP central directory')
		const method = view.getUint16(offset + 10, true)
		const crc = view.getUint32(offset + 16, true)
		const compressedSize = view.getUint32(offset + 20, true)
		const nameLength = view.getUint16(offset + 28, true)
		const extraLength = view.getUint16(offset + 30, true)
		const commentLength = view.getUint16(offset + 32, true)
		const localOffset = view.getUint32(offset + 42, true)
		const name = decoder.decode(bytes.subarray(offset + 46, offset + 46 + nameLength))
		if (view.getUint32(localOffset, true) !== LOCAL_HEADER) throw new Error(`Corrupt ZIP local header for ${name}`)
		const dataStart = localOffset + 30 + view.getUint16(localOffset + 26, true) + view.getUint16(localOffset + 28, true)
		const raw = bytes.subarray(dataStart, dataStart + compressedSize)
		if (method !== 0 && method !== 8) throw new Error(`Unsupported ZIP compression method ${method} for ${name}`)
		entries.push({
			name,
			data: method === 0 ? new Uint8Array(raw) : new Uint8Array(inflateRawSync(raw)),
			raw: { method, crc, bytes: new Uint8Array(raw) },
		})
		offset += 46 + nameLength + extraLength + commentLength
	}
	return entries
}

/** MS-DOS date and time fields of an instant, read in UTC (ZIP has no zone; UTC keeps it independent of the host). */
function dosDateTime(at: Date): { date: number; time: number } {
	const year = Math.min(Math.max(at.getUTCFullYear(), 1980), 2107)
	return {
		date: ((year - 1980) << 9) | ((at.getUTCMonth() + 1) << 5) | at.getUTCDate(),
		time: (at.getUTCHours() << 11) | (at.getUTCMinutes() << 5) | Math.floor(at.getUTCSeconds() / 2),
	}
}

/** Writes entries, in the given order, with every timestamp set to `at`. Same input, same bytes. No ZIP64. */
export function writeZip(entries: ReadonlyArray<ZipEntry>, at: Date): Uint8Array {
	const { date, time } = dosDateTime(at)
	const encoder = new TextEncoder()
	const locals: Array<Uint8Array> = []
	const centrals: Array<Uint8Array> = []
	let offset = 0
	for (const entry of entries) {
		const name = encoder.encode(entry.name)
		const method = entry.raw?.method ?? 8
		const compressed = entry.raw?.bytes ?? new Uint8Array(deflateRawSync(entry.data, { level: 6 }))
		const crc = entry.raw?.crc ?? crc32(entry.data) >>> 0
		const utf8 = /[^\x20-\x7e]/.test(entry.name) ? 0x0800 : 0
		const local = new Uint8Array(30 + name.length)
		const lv = new DataView(local.buffer)
		lv.setUint32(0, LOCAL_HEADER, true)
		lv.setUint16(4, 20, true)
		lv.setUint16(6, utf8, true)
		lv.setUint16(8, method, true)
		lv.setUint16(10, time, true)
		lv.setUint16(12, date, true)
		lv.setUint32(14, crc, true)
		lv.setUint32(18, compressed.length, true)
		lv.setUint32(22, entry.data.length, true)
		lv.setUint16(26, name.length, true)
		local.set(name, 30)
		const central = new Uint8Array(46 + name.length)
		const cv = new DataView(central.buffer)
		cv.setUint32(0, CENTRAL_HEADER, true)
		cv.setUint16(4, 20, true)
		cv.setUint16(6, 20, true)
		cv.setUint16(8, utf8, true)
		cv.setUint16(10, method, true)
		cv.setUint16(12, time, true)
		cv.setUint16(14, date, true)
		cv.setUint32(16, crc, true)
		cv.setUint32(20, compressed.length, true)
		cv.setUint32(24, entry.data.length, true)
		cv.setUint16(28, name.length, true)
		cv.setUint32(42, offset, true)
		central.set(name, 46)
		locals.push(local, compressed)
		centrals.push(central)
		offset += local.length + compressed.length
	}
	const centralSize = centrals.reduce((sum, part) => sum + part.length, 0)
	const end = new Uint8Array(22)
	const ev = new DataView(end.buffer)
	ev.setUint32(0, END_OF_CENTRAL_DIRECTORY, true)
	ev.setUint16(8, entries.length, true)
	ev.setUint16(10, entries.length, true)
	ev.setUint32(12, centralSize, true)
	ev.setUint32(16, offset, true)
	const out = new Uint8Array(offset + centralSize + 22)
	let cursor = 0
	for (const part of [...locals, ...centrals, end]) {
		out.set(part, cursor)
		cursor += part.length
	}
	return out
}
