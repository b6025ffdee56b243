/**
 * The app's own fonts for documents: Inter for text, Merriweather for headings. TTF files from @expo-google-fonts
 * (never WOFF/WOFF2: pdf-lib crashes on WOFF2 and resvg draws no text from either). Read once per process.
 */
import { readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import fontkit, { type Font } from '@pdf-lib/fontkit'

export type FontFace = 'inter' | 'inter-bold' | 'inter-italic' | 'merriweather' | 'merriweather-bold'

const FILES: Record<FontFace, string> = {
	inter: '@expo-google-fonts/inter/400Regular/Inter_400Regular.ttf',
	'inter-bold': '@expo-google-fonts/inter/600SemiBold/Inter_600SemiBold.ttf',
	'inter-italic': '@expo-google-fonts/inter/400Regular_Italic/Inter_400Regular_Italic.ttf',
	merriweather: '@expo-google-fonts/merriweather/400Regular/Merriweather_400Regular.ttf',
	'merriweather-bold': '@expo-google-fonts/merriweather/700Bold/Merriweather_700Bold.ttf',
}

const require = createRequire(import.meta.url)
const bytesCache = new Map<FontFace, Uint8Array>()
const metricsCache = new Map<FontFace, Font>()

/** Absolute path of a face's TTF file. */
export function fontPath(face: FontFace): string {
	return require.resolve(FILES[face])
}

/** The TTF bytes of a face (cached; callers must not modify them). */
export function fontBytes(face: FontFace): Uint8Array {
	let bytes = bytesCache.get(face)
	if (bytes === undefined) {
		bytes = new Uint8Array(readFileSync(fontPath(face)))
		bytesCache.set(face, bytes)
	}
	return bytes
}

function metrics(face: FontFace): Font {
	let font = metricsCache.get(face)
	if (font === undefined) {
		font = fontkit.create(fontBytes(face))
		metricsCache.set(face, font)
	}
	return font
}

/**
 * Advance width of `text` in points at `size` pt: one glyph per character, no kerning or substitutions, which is
 * exactly how the PDF renderer draws it (see subsetTrueType).
 */
export function measureText(text: string, size: number, face: FontFace = 'inter'): number {
	const font = metrics(face)
	let width = 0
	for (const glyph of font.glyphsForString(text)) width += glyph.advanceWidth
	return (width / font.unitsPerEm) * size
}

/** The face's PostScript name, e.g. 'Inter-Regular'. */
export function postscriptName(face: FontFace): string {
	return metrics(face).postscriptName ?? face
}

/** True when the face has a glyph for every character of `text`. */
export function hasGlyphs(text: string, face: FontFace): boolean {
	const font = metrics(face)
	for (const char of text) if (!font.hasGlyphForCodePoint(char.codePointAt(0)!)) return false
	return true
}

/** Tables a PDF viewer needs to draw TrueType glyphs by id; everything else (shaping, kerning, variations) is dropped. */
const KEPT_TABLES = new Set([
	'head',
	'hhea',
	'maxp',
	'hmtx',
	'loca',
	'glyf',
	'cmap',
	'post',
	'name',
	'OS/2',
	'cvt ',
	'fpgm',
	'prep',
	'gasp',
])

/**
 * A TrueType font cut down to the glyphs of `codePoints` (plus .notdef and the parts of composite glyphs), keeping
 * every glyph id where it was: unused glyphs become empty outlines, the cmap maps only `codePoints`, and the
 * shaping tables go, so that layout maps one character to one glyph and draws exactly what it measures.
 *
 * NOTE: we subset ourselves because @pdf-lib/fontkit's subsetter loses most outlines of these Inter and Merriweather
 * builds (the letters vanish from the page), while embedding the whole fonts costs about 1.7 MB per document.
 */
export function subsetTrueType(face: FontFace, codePoints: ReadonlySet<number>): Uint8Array {
	const bytes = fontBytes(face)
	const font = metrics(face)
	const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength)
	const tables = new Map<string, Uint8Array>()
	const numTables = view.getUint16(4)
	for (let i = 0; i < numTables; i++) {
		const record = 12 + 16 * i
		const tag = String.fromCharCode(...bytes.subarray(record, record + 4))
		const offset = view.getUint32(record + 8)
		const length = view.getUint32(record + 12)
		tables.set(tag, bytes.subarray(offset, offset + length))
	}
	const table = (tag: string) => {
		const found = tables.get(tag)
		if (found === undefined) throw new Error(`${face}: no ${tag} table`)
		return found
	}
	const head = new Uint8Array(table('head'))
	const headView = new DataView(head.buffer)
	const longLoca = headView.getInt16(50) === 1
	const numGlyphs = new DataView(table('maxp').buffer, table('maxp').byteOffset).getUint16(4)
	const loca = table('loca')
	const locaView = new DataView(loca.buffer, loca.byteOffset, loca.byteLength)
	const glyphOffset = (id: number) => (longLoca ? locaView.getUint32(id * 4) : locaView.getUint16(id * 2) * 2)
	const glyf = table('glyf')
	const glyfView = new DataView(glyf.buffer, glyf.byteOffset, glyf.byteLength)

	const mapping = new Map<number, number>()
	for (const codePoint of codePoints) {
		if (font.hasGlyphForCodePoint(codePoint)) mapping.set(codePoint, font.glyphForCodePoint(codePoint).id)
	}
	const keep = new Set<number>([0])
	const pending = [...mapping.values()]
	while (pending.length > 0) {
		const id = pending.pop()!
		if (keep.has(id) && id !== 0) continue
		keep.add(id)
		const start = glyphOffset(id)
		if (glyphOffset(id + 1) === start || glyfView.getInt16(start) >= 0) continue
		// Composite glyph: keep its components too.
		let at = start + 10
		for (;;) {
			const flags = glyfView.getUint16(at)
			pending.push(glyfView.getUint16(at + 2))
			at += 4 + (flags & 0x0001 ? 4 : 2) + (flags & 0x0008 ? 2 : flags & 0x0040 ? 4 : flags & 0x0080 ? 8 : 0)
			if (!(flags & 0x0020)) break
		}
	}

	const parts: Array<Uint8Array> = []
	const newLoca = new Uint8Array((numGlyphs + 1) * 4)
	const newLocaView = new DataView(newLoca.buffer)
	let size = 0
	for (let id = 0; id < numGlyphs; id++) {
		newLocaView.setUint32(id * 4, size)
		if (!keep.has(id)) continue
		const data = glyf.subarray(glyphOffset(id), glyphOffset(id + 1))
		parts.push(data)
		size += data.length
		if (size % 4 !== 0) {
			parts.push(new Uint8Array(4 - (size % 4)))
			size += 4 - (size % 4)
		}
	}
	newLocaView.setUint32(numGlyphs * 4, size)
	const newGlyf = new Uint8Array(size)
	let cursor = 0
	for (const part of parts) {
		newGlyf.set(part, cursor)
		cursor += part.length
	}
	headView.setInt16(50, 1)
	headView.setUint32(8, 0)

	// cmap: one format 12 subtable (Windows, Unicode full repertoire) with one group per character.
	const sorted = [...mapping.entries()].sort((a, b) => a[0] - b[0])
	const cmap = new Uint8Array(12 + 16 + 12 * sorted.length)
	const cmapView = new DataView(cmap.buffer)
	cmapView.setUint16(2, 1)
	cmapView.setUint16(4, 3)
	cmapView.setUint16(6, 10)
	cmapView.setUint32(8, 12)
	cmapView.setUint16(12, 12)
	cmapView.setUint32(16, 16 + 12 * sorted.length)
	cmapView.setUint32(24, sorted.length)
	sorted.forEach(([codePoint, id], i) => {
		cmapView.setUint32(28 + 12 * i, codePoint)
		cmapView.setUint32(32 + 12 * i, codePoint)
		cmapView.setUint32(36 + 12 * i, id)
	})
	// post version 3: no glyph names.
	const post = new Uint8Array(table('post').subarray(0, 32))
	new DataView(post.buffer).setUint32(0, 0x00030000)

	const out = new Map<string, Uint8Array>()
	for (const [tag, data] of tables) if (KEPT_TABLES.has(tag)) out.set(tag, data)
	out.set('head', head)
	out.set('loca', newLoca)
	out.set('glyf', newGlyf)
	out.set('cmap', cmap)
	out.set('post', post)
	return assembleSfnt(out, view.getUint32(0))
}

function checksum(data: Uint8Array): number {
	const padded = new Uint8Array(Math.ceil(data.length / 4) * 4)
	padded.set(data)
	const view = new DataView(padded.buffer)
	let sum = 0
	for (let i = 0; i < padded.length; i += 4) sum = (sum + view.getUint32(i)) >>> 0
	return sum
}

function assembleSfnt(tables: Map<string, Uint8Array>, sfntVersion: number): Uint8Array {
	const tags = [...tables.keys()].sort()
	const count = tags.length
	const headerSize = 12 + 16 * count
	let total = headerSize
	for (const tag of tags) total += Math.ceil(tables.get(tag)!.length / 4) * 4
	const out = new Uint8Array(total)
	const view = new DataView(out.buffer)
	const entrySelector = Math.floor(Math.log2(count))
	view.setUint32(0, sfntVersion)
	view.setUint16(4, count)
	view.setUint16(6, 2 ** entrySelector * 16)
	view.setUint16(8, entrySelector)
	view.setUint16(10, count * 16 - 2 ** entrySelector * 16)
	let offset = headerSize
	let headOffset = -1
	tags.forEach((tag, i) => {
		const data = tables.get(tag)!
		const record = 12 + 16 * i
		for (let k = 0; k < 4; k++) view.setUint8(record + k, tag.charCodeAt(k))
		view.setUint32(record + 4, checksum(data))
		view.setUint32(record + 8, offset)
		view.setUint32(record + 12, data.length)
		out.set(data, offset)
		if (tag === 'head') headOffset = offset
		offset += Math.ceil(data.length / 4) * 4
	})
	view.setUint32(headOffset + 8, (0xb1b0afba - checksum(out)) >>> 0)
	return out
}
