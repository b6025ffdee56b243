/**
 * PDF rendering of a document layout with pdf-lib: A4, Inter and Merriweather embedded (TrueType subsets through
 * fontkit), figures drawn as vectors, tables that break across pages with their head row repeated, and on every page
 * the running header and footer ("Page X of Y") and, when the layout asks for it, a diagonal mark such as DRAFT.
 * Deterministic: the same layout and `renderedAt` give the same bytes.
 */
import fontkit from '@pdf-lib/fontkit'
import { degrees, LineCapStyle, PDFDocument, type PDFFont, type PDFPage, rgb, type RGB } from 'pdf-lib'
import type { FigureSpec } from '#app/.server/render/figure.ts'
import { createHash } from 'node:crypto'
import { type FontFace, hasGlyphs, postscriptName, subsetTrueType } from '#app/.server/render/fonts.ts'
import type { Align, Block, DocumentLayout, NoticeTone, ParagraphStyle, Run } from '#app/.server/render/layout.ts'

/** A4 in points. */
const PAGE_WIDTH = 595.28
const PAGE_HEIGHT = 841.89
const MARGIN_X = 56
const CONTENT_WIDTH = PAGE_WIDTH - 2 * MARGIN_X
const CONTENT_TOP = 70
const CONTENT_BOTTOM = PAGE_HEIGHT - 64
const HEADER_BASELINE = 36
const HEADER_RULE = 44
const FOOTER_RULE = PAGE_HEIGHT - 48
const FOOTER_BASELINE = PAGE_HEIGHT - 34

function hex(color: string): RGB {
	const value = parseInt(color.slice(1), 16)
	return rgb(((value >> 16) & 255) / 255, ((value >> 8) & 255) / 255, (value & 255) / 255)
}

const INK = hex('#1d2430')
const INK_SOFT = hex('#4a5363')
const RULE = hex('#e3dfd4')
const RULE_STRONG = hex('#c9c3b3')
const ACCENT = hex('#2c5c5f')
const HEAD_FILL = hex('#f3f1ea')
const MARK_COLOR = hex('#9b2f22')
const TONES: Record<NoticeTone, { bar: RGB; fill: RGB }> = {
	caution: { bar: hex('#8a5a0b'), fill: hex('#fbf1dc') },
	info: { bar: ACCENT, fill: hex('#e3eeec') },
	warning: { bar: hex('#9b2f22'), fill: hex('#f8e7e3') },
}

type TextStyle = { face: FontFace; bold: FontFace; italic: FontFace; size: number; leading: number; color: RGB }
const BODY: TextStyle = {
	face: 'inter',
	bold: 'inter-bold',
	italic: 'inter-italic',
	size: 9.5,
	leading: 14,
	color: INK,
}
const PARAGRAPHS: Record<ParagraphStyle, TextStyle & { before: number; after: number; align: Align }> = {
	kicker: { ...BODY, face: 'inter-bold', size: 8.5, leading: 12, color: ACCENT, before: 0, after: 2, align: 'left' },
	title: {
		...BODY,
		face: 'merriweather-bold',
		bold: 'merriweather-bold',
		size: 21,
		leading: 28,
		before: 18,
		after: 6,
		align: 'left',
	},
	subtitle: {
		...BODY,
		face: 'merriweather',
		bold: 'merriweather-bold',
		size: 11.5,
		leading: 16,
		color: INK_SOFT,
		before: 0,
		after: 18,
		align: 'left',
	},
	body: { ...BODY, before: 0, after: 7, align: 'left' },
	small: { ...BODY, size: 8.5, leading: 12, before: 2, after: 3, align: 'left' },
	caption: {
		...BODY,
		face: 'inter-italic',
		size: 8,
		leading: 11,
		color: INK_SOFT,
		before: 4,
		after: 12,
		align: 'left',
	},
	end: { ...BODY, face: 'inter-italic', size: 8.5, leading: 12, color: INK_SOFT, before: 0, after: 0, align: 'center' },
}
const HEADINGS = {
	1: { ...BODY, face: 'merriweather-bold', bold: 'merriweather-bold', size: 13, leading: 18, before: 16, after: 8 },
	2: { ...BODY, face: 'merriweather-bold', bold: 'merriweather-bold', size: 10.5, leading: 15, before: 12, after: 5 },
} as const satisfies Record<1 | 2, TextStyle & { before: number; after: number }>
const CELL: TextStyle = { ...BODY, size: 8.5, leading: 11.5 }
const CELL_HEAD: TextStyle = { ...CELL, face: 'inter-bold', size: 8, leading: 11 }
const FIELD_LABEL: TextStyle = { ...CELL, size: 8.5, color: INK_SOFT }
const FIELD_VALUE: TextStyle = { ...CELL, size: 8.5 }
const RUNNING: TextStyle = { ...BODY, size: 7.5, leading: 10, color: INK_SOFT }
const CELL_PAD_X = 5
const CELL_PAD_Y = 4
const FIELD_LABEL_SHARE = 0.27

const FALLBACK: Record<FontFace, FontFace> = {
	inter: 'inter',
	'inter-bold': 'inter-bold',
	'inter-italic': 'inter',
	merriweather: 'inter',
	'merriweather-bold': 'inter-bold',
}

type Piece = { text: string; face: FontFace; size: number; color: RGB; width: number }
type Line = { pieces: Array<Piece>; width: number }

type Fonts = Record<FontFace, PDFFont>

class Writer {
	readonly pages: Array<PDFPage> = []
	page!: PDFPage
	/** Distance of the cursor from the top of the page, pt. */
	y = CONTENT_TOP
	/** Lowest cursor position for content on a page. */
	readonly bottom: number
	constructor(
		readonly doc: PDFDocument,
		readonly fonts: Fonts,
		/** A measuring writer draws nothing and never breaks pages: it only advances `y`. */
		readonly measuring = false,
	) {
		this.bottom = measuring ? Infinity : CONTENT_BOTTOM
		if (measuring) this.y = CONTENT_TOP
		else this.newPage()
	}

	newPage(): void {
		if (this.measuring) return
		this.page = this.doc.addPage([PAGE_WIDTH, PAGE_HEIGHT])
		this.pages.push(this.page)
		this.y = CONTENT_TOP
	}

	get atTop(): boolean {
		return this.y <= CONTENT_TOP + 0.01
	}

	/** Starts a new page unless `height` still fits below the cursor (or the cursor is already at the top). */
	ensure(height: number): void {
		if (!this.atTop && this.y + height > this.bottom) this.newPage()
	}

	/** Splits text into pieces a face can draw, falling back to Inter for glyphs a face lacks (e.g. ⁻ in Merriweather). */
	pieces(text: string, face: FontFace, size: number, color: RGB): Array<Piece> {
		if (hasGlyphs(text, face))
			return [{ text, face, size, color, width: this.fonts[face].widthOfTextAtSize(text, size) }]
		const out: Array<Piece> = []
		for (const char of text) {
			const use = hasGlyphs(char, face) ? face : FALLBACK[face]
			const last = out[out.length - 1]
			if (last !== undefined && last.face === use) last.text += char
			else out.push({ text: char, face: use, size, color, width: 0 })
		}
		for (const piece of out) piece.width = this.fonts[piece.face].widthOfTextAtSize(piece.text, size)
		return out
	}

	/** Greedy line breaking of styled runs into lines at most `width` wide; over-long words break between characters. */
	wrap(
		runs: ReadonlyArray<Run>,
		style: TextStyle,
		width: number,
		fields: { page: number; pages: number } | null = null,
	): Array<Line> {
		type Word = { pieces: Array<Piece>; width: number; space: Piece | null; forced: boolean }
		const words: Array<Word> = []
		let current: Word = { pieces: [], width: 0, space: null, forced: false }
		const flush = (space: Piece | null) => {
			if (current.pieces.length > 0) words.push({ ...current, space })
			else if (space !== null && words.length > 0) words[words.length - 1]!.space = space
			current = { pieces: [], width: 0, space: null, forced: false }
		}
		for (const run of runs) {
			if (run.field === 'break') {
				flush(null)
				words.push({ pieces: [], width: 0, space: null, forced: true })
				continue
			}
			const face = run.bold ? style.bold : run.italic ? style.italic : style.face
			const text =
				run.field === null ? run.text : String(run.field === 'page' ? (fields?.page ?? 0) : (fields?.pages ?? 0))
			for (const part of text.split(/( +)/)) {
				if (part === '') continue
				if (part.startsWith(' ')) {
					flush(this.pieces(' ', face, style.size, style.color)[0]!)
				} else {
					for (const piece of this.pieces(part, face, style.size, style.color)) {
						current.pieces.push(piece)
						current.width += piece.width
					}
				}
			}
		}
		flush(null)
		const lines: Array<Line> = []
		let line: Line = { pieces: [], width: 0 }
		let pendingSpace: Piece | null = null
		const push = () => {
			if (line.pieces.length > 0) lines.push(line)
			line = { pieces: [], width: 0 }
			pendingSpace = null
		}
		for (const word of words) {
			if (word.forced) {
				push()
				continue
			}
			const spaceWidth: number = pendingSpace === null ? 0 : pendingSpace.width
			if (line.pieces.length > 0 && line.width + spaceWidth + word.width > width) push()
			if (word.width > width) {
				// NOTE: hashes and file names can be longer than a column; break them between characters.
				if (line.pieces.length > 0) push()
				for (const piece of word.pieces) {
					for (const char of piece.text) {
						const charWidth = this.fonts[piece.face].widthOfTextAtSize(char, piece.size)
						if (line.width + charWidth > width && line.pieces.length > 0) push()
						const last = line.pieces[line.pieces.length - 1]
						if (last !== undefined && last.face === piece.face && last.color === piece.color) {
							last.text += char
							last.width += charWidth
						} else {
							line.pieces.push({ ...piece, text: char, width: charWidth })
						}
						line.width += charWidth
					}
				}
			} else {
				if (line.pieces.length > 0 && pendingSpace !== null) {
					line.pieces.push(pendingSpace)
					line.width += pendingSpace.width
				}
				for (const piece of word.pieces) line.pieces.push(piece)
				line.width += word.width
			}
			pendingSpace = word.space
		}
		push()
		return lines
	}

	drawLine(line: Line, x: number, top: number, style: TextStyle, align: Align, width: number, page = this.page): void {
		if (this.measuring) return
		let cursor = align === 'left' ? x : align === 'right' ? x + width - line.width : x + (width - line.width) / 2
		const baseline = top + style.leading / 2 + style.size * 0.36
		// One text operation per stretch of the same face: fewer operators, and whole phrases for text extraction.
		const stretches: Array<Piece> = []
		for (const piece of line.pieces) {
			const last = stretches[stretches.length - 1]
			if (last !== undefined && last.face === piece.face && last.size === piece.size && last.color === piece.color) {
				last.text += piece.text
				last.width += piece.width
			} else {
				stretches.push({ ...piece })
			}
		}
		for (const stretch of stretches) {
			const text = stretch.text.trimEnd()
			if (text.trim() !== '') {
				page.drawText(text, {
					x: cursor,
					y: PAGE_HEIGHT - baseline,
					size: stretch.size,
					font: this.fonts[stretch.face],
					color: stretch.color,
				})
			}
			cursor += stretch.width
		}
	}

	rule(top: number, color: RGB, thickness = 0.5, x = MARGIN_X, width = CONTENT_WIDTH): void {
		if (this.measuring) return
		this.page.drawLine({
			start: { x, y: PAGE_HEIGHT - top },
			end: { x: x + width, y: PAGE_HEIGHT - top },
			thickness,
			color,
		})
	}

	rect(x: number, top: number, width: number, height: number, color: RGB): void {
		if (this.measuring) return
		this.page.drawRectangle({ x, y: PAGE_HEIGHT - top - height, width, height, color })
	}
}

function paragraph(
	writer: Writer,
	runs: ReadonlyArray<Run>,
	style: TextStyle & { before: number; after: number; align: Align },
): void {
	if (!writer.atTop) writer.y += style.before
	const lines = writer.wrap(runs, style, CONTENT_WIDTH)
	// Keep at least two lines together at a page foot.
	writer.ensure(Math.min(lines.length, 2) * style.leading)
	for (const line of lines) {
		writer.ensure(style.leading)
		writer.drawLine(line, MARGIN_X, writer.y, style, style.align, CONTENT_WIDTH)
		writer.y += style.leading
	}
	writer.y += style.after
}

function heading(writer: Writer, text: string, level: 1 | 2): void {
	const style = HEADINGS[level]
	const lines = writer.wrap([{ text, bold: false, italic: false, field: null }], style, CONTENT_WIDTH)
	const height = lines.length * style.leading + style.after
	// Keep a heading with the start of what follows it (a table needs its head row and a few rows).
	writer.ensure(style.before + height + 100)
	if (!writer.atTop) writer.y += style.before
	for (const line of lines) {
		writer.drawLine(line, MARGIN_X, writer.y, style, 'left', CONTENT_WIDTH)
		writer.y += style.leading
	}
	if (level === 1) writer.rule(writer.y + 1, RULE_STRONG, 0.6)
	writer.y += style.after
}

type Cell = { lines: Array<Line>; style: TextStyle; align: Align }

function rowHeight(cells: ReadonlyArray<Cell>): number {
	return Math.max(...cells.map((cell) => cell.lines.length * cell.style.leading)) + 2 * CELL_PAD_Y
}

function drawRow(writer: Writer, cells: ReadonlyArray<Cell>, widths: ReadonlyArray<number>, fill: RGB | null): number {
	const height = rowHeight(cells)
	if (fill !== null) writer.rect(MARGIN_X, writer.y, CONTENT_WIDTH, height, fill)
	let x = MARGIN_X
	cells.forEach((cell, i) => {
		const w = widths[i]!
		cell.lines.forEach((line, k) => {
			writer.drawLine(
				line,
				x + CELL_PAD_X,
				writer.y + CELL_PAD_Y + k * cell.style.leading,
				cell.style,
				cell.align,
				w - 2 * CELL_PAD_X,
			)
		})
		x += w
	})
	writer.y += height
	return height
}

function table(
	writer: Writer,
	widths: ReadonlyArray<number>,
	head: ReadonlyArray<Cell> | null,
	rows: ReadonlyArray<ReadonlyArray<Cell>>,
): void {
	const drawHead = () => {
		if (head === null) return
		writer.rule(writer.y, RULE_STRONG, 0.6)
		drawRow(writer, head, widths, HEAD_FILL)
		writer.rule(writer.y, RULE_STRONG, 0.6)
	}
	const headHeight = head === null ? 0 : rowHeight(head)
	// Never leave the head row with fewer than three rows (or the whole table, when shorter) at a page foot.
	writer.ensure(headHeight + rows.slice(0, 3).reduce((sum, row) => sum + rowHeight(row), 0))
	drawHead()
	rows.forEach((row, index) => {
		const height = rowHeight(row)
		if (!writer.atTop && writer.y + height > writer.bottom) {
			writer.newPage()
			// The head row is repeated on every page the table continues on.
			drawHead()
		}
		drawRow(writer, row, widths, null)
		writer.rule(writer.y, index === rows.length - 1 ? RULE_STRONG : RULE, index === rows.length - 1 ? 0.6 : 0.4)
	})
	writer.y += 10
}

function cellsOf(
	writer: Writer,
	runs: ReadonlyArray<ReadonlyArray<Run>>,
	widths: ReadonlyArray<number>,
	styles: ReadonlyArray<TextStyle>,
	aligns: ReadonlyArray<Align>,
): Array<Cell> {
	return runs.map((cell, i) => ({
		lines: writer.wrap(cell, styles[i]!, widths[i]! - 2 * CELL_PAD_X),
		style: styles[i]!,
		align: aligns[i]!,
	}))
}

function list(writer: Writer, items: ReadonlyArray<ReadonlyArray<Run>>): void {
	const style = { ...BODY, size: 9, leading: 13 }
	const indent = 16
	for (const item of items) {
		const lines = writer.wrap(item, style, CONTENT_WIDTH - indent)
		lines.forEach((line, k) => {
			writer.ensure(style.leading)
			if (k === 0) {
				const bullet = writer.wrap(
					[{ text: '•', bold: false, italic: false, field: null }],
					{ ...style, color: ACCENT },
					indent,
				)[0]!
				writer.drawLine(bullet, MARGIN_X + 4, writer.y, style, 'left', indent)
			}
			writer.drawLine(line, MARGIN_X + indent, writer.y, style, 'left', CONTENT_WIDTH - indent)
			writer.y += style.leading
		})
		writer.y += 2
	}
	writer.y += 5
}

function notice(writer: Writer, tone: NoticeTone, title: string, runs: ReadonlyArray<Run>): void {
	const pad = 9
	const inner = CONTENT_WIDTH - 2 * pad - 3
	const titleStyle = { ...CELL, face: 'inter-bold' as const, size: 9, leading: 13 }
	const textStyle = { ...CELL, size: 8.5, leading: 12.5 }
	const titleLines = writer.wrap([{ text: title, bold: false, italic: false, field: null }], titleStyle, inner)
	const lines = writer.wrap(runs, textStyle, inner)
	const height = 2 * pad + titleLines.length * titleStyle.leading + 2 + lines.length * textStyle.leading
	if (!writer.atTop) writer.y += 6
	writer.ensure(height)
	writer.rect(MARGIN_X, writer.y, CONTENT_WIDTH, height, TONES[tone].fill)
	writer.rect(MARGIN_X, writer.y, 3, height, TONES[tone].bar)
	let top = writer.y + pad
	for (const line of titleLines) {
		writer.drawLine(line, MARGIN_X + 3 + pad, top, titleStyle, 'left', inner)
		top += titleStyle.leading
	}
	top += 2
	for (const line of lines) {
		writer.drawLine(line, MARGIN_X + 3 + pad, top, textStyle, 'left', inner)
		top += textStyle.leading
	}
	writer.y += height + 12
}

function figure(writer: Writer, spec: FigureSpec, caption: ReadonlyArray<Run>): void {
	const captionStyle = PARAGRAPHS.caption
	const captionLines = writer.wrap(caption, captionStyle, CONTENT_WIDTH)
	writer.y += 4
	writer.ensure(spec.height + captionStyle.before + captionLines.length * captionStyle.leading)
	drawFigure(writer, spec, MARGIN_X + (CONTENT_WIDTH - spec.width) / 2, writer.y)
	writer.y += spec.height
	paragraph(writer, caption, captionStyle)
}

/** Draws figure primitives as vectors; (left, top) is the figure's top-left corner in page coordinates (y down). */
function drawFigure(writer: Writer, spec: FigureSpec, left: number, top: number): void {
	if (writer.measuring) return
	const page = writer.page
	const X = (x: number) => left + x
	const Y = (y: number) => PAGE_HEIGHT - (top + y)
	for (const item of spec.items) {
		switch (item.kind) {
			case 'rect':
				page.drawRectangle({
					x: X(item.x),
					y: Y(item.y + item.h),
					width: item.w,
					height: item.h,
					...(item.fill === 'none' ? {} : { color: hex(item.fill), opacity: item.opacity }),
					...(item.stroke === null ? {} : { borderColor: hex(item.stroke), borderWidth: 0.6 }),
				})
				break
			case 'line':
				page.drawLine({
					start: { x: X(item.x1), y: Y(item.y1) },
					end: { x: X(item.x2), y: Y(item.y2) },
					thickness: item.width,
					color: hex(item.stroke),
					...(item.dash === null ? {} : { dashArray: [item.dash, item.dash] }),
				})
				break
			case 'path':
				page.drawSvgPath(item.d, {
					x: X(0),
					y: Y(0),
					borderColor: hex(item.stroke),
					borderWidth: item.width,
					borderLineCap: LineCapStyle.Round,
				})
				break
			case 'text': {
				const font = writer.fonts[item.bold ? 'inter-bold' : 'inter']
				const width = font.widthOfTextAtSize(item.text, item.size)
				const shift = item.anchor === 'start' ? 0 : item.anchor === 'middle' ? width / 2 : width
				const upright = item.rotate === -90
				page.drawText(item.text, {
					x: X(item.x) - (upright ? 0 : shift),
					y: Y(item.y) - (upright ? shift : 0),
					size: item.size,
					font,
					color: hex(item.color),
					...(upright ? { rotate: degrees(90) } : {}),
				})
				break
			}
			default: {
				const never: never = item
				throw new Error(`Unknown figure item ${String(never)}`)
			}
		}
	}
}

function block(writer: Writer, item: Block): void {
	switch (item.kind) {
		case 'heading':
			heading(writer, item.text, item.level)
			break
		case 'paragraph':
			paragraph(writer, item.runs, PARAGRAPHS[item.style])
			break
		case 'fields': {
			const widths = [CONTENT_WIDTH * FIELD_LABEL_SHARE, CONTENT_WIDTH * (1 - FIELD_LABEL_SHARE)]
			const rows = item.rows.map((row) =>
				cellsOf(
					writer,
					[[{ text: row.label, bold: false, italic: false, field: null }], row.runs],
					widths,
					[FIELD_LABEL, FIELD_VALUE],
					['left', 'left'],
				),
			)
			table(writer, widths, null, rows)
			break
		}
		case 'table': {
			const widths = item.widths.map((share) => share * CONTENT_WIDTH)
			const head =
				item.head === null
					? null
					: cellsOf(
							writer,
							item.head,
							widths,
							widths.map(() => CELL_HEAD),
							item.align,
						)
			const rows = item.rows.map((row) =>
				cellsOf(
					writer,
					row,
					widths,
					widths.map(() => CELL),
					item.align,
				),
			)
			table(writer, widths, head, rows)
			break
		}
		case 'list':
			list(writer, item.items)
			break
		case 'figure':
			figure(writer, item.figure, item.caption)
			break
		case 'notice':
			notice(writer, item.tone, item.title, item.runs)
			break
		case 'space':
			// Space never starts a page, nor pushes what follows onto the next one. NOTE: near the page foot it shrinks
			// to nothing, but never moves the cursor back up over what is already drawn.
			if (!writer.atTop) writer.y = Math.max(writer.y, Math.min(writer.y + item.size, writer.bottom - 24))
			break
		case 'pagebreak':
			if (!writer.atTop) writer.newPage()
			break
		case 'keep': {
			// Start the group on a new page when it would not fit here but fits on a page of its own.
			const measure = new Writer(writer.doc, writer.fonts, true)
			const start = CONTENT_TOP + 1 // not at the top, so that leading space is counted as it will be here
			measure.y = start
			for (const child of item.blocks) block(measure, child)
			const height = measure.y - start
			if (!writer.atTop && writer.y + height > writer.bottom && height <= CONTENT_BOTTOM - CONTENT_TOP) writer.newPage()
			for (const child of item.blocks) block(writer, child)
			break
		}
		default: {
			const never: never = item
			throw new Error(`Unknown block ${String(never)}`)
		}
	}
}

/** Header, footer and mark, drawn once the page count is known. */
function decorate(writer: Writer, layout: DocumentLayout): void {
	const total = writer.pages.length
	writer.pages.forEach((page, index) => {
		const fields = { page: index + 1, pages: total }
		const band = (left: ReadonlyArray<Run>, right: ReadonlyArray<Run>, top: number) => {
			const rightLine = writer.wrap(right, RUNNING, CONTENT_WIDTH, fields)[0]
			const room = CONTENT_WIDTH - (rightLine?.width ?? 0) - 16
			const leftLine = truncate(writer, writer.wrap(left, RUNNING, 10_000, fields)[0], room)
			const lineTop = top - RUNNING.leading / 2 - RUNNING.size * 0.36
			if (leftLine !== undefined) writer.drawLine(leftLine, MARGIN_X, lineTop, RUNNING, 'left', room, page)
			if (rightLine !== undefined) writer.drawLine(rightLine, MARGIN_X, lineTop, RUNNING, 'right', CONTENT_WIDTH, page)
		}
		band(layout.running.headerLeft, layout.running.headerRight, HEADER_BASELINE)
		band(layout.running.footerLeft, layout.running.footerRight, FOOTER_BASELINE)
		for (const top of [HEADER_RULE, FOOTER_RULE]) {
			page.drawLine({
				start: { x: MARGIN_X, y: PAGE_HEIGHT - top },
				end: { x: MARGIN_X + CONTENT_WIDTH, y: PAGE_HEIGHT - top },
				thickness: 0.5,
				color: RULE_STRONG,
			})
		}
		if (layout.running.mark !== null) drawMark(writer, page, layout.running.mark)
	})
}

function truncate(writer: Writer, line: Line | undefined, width: number): Line | undefined {
	if (line === undefined || line.width <= width) return line
	const ellipsis = writer.pieces('…', 'inter', RUNNING.size, RUNNING.color)[0]!
	const pieces: Array<Piece> = []
	let used = ellipsis.width
	for (const piece of line.pieces) {
		if (used + piece.width <= width) {
			pieces.push(piece)
			used += piece.width
			continue
		}
		let text = ''
		for (const char of piece.text) {
			const next = writer.fonts[piece.face].widthOfTextAtSize(text + char, piece.size)
			if (used + next > width) break
			text += char
		}
		if (text !== '') {
			const w = writer.fonts[piece.face].widthOfTextAtSize(text, piece.size)
			pieces.push({ ...piece, text, width: w })
			used += w
		}
		break
	}
	pieces.push(ellipsis)
	return { pieces, width: used }
}

/** A large, faint diagonal word across the middle of the page. */
function drawMark(writer: Writer, page: PDFPage, text: string): void {
	const font = writer.fonts['inter-bold']
	const size = Math.min(120, (PAGE_WIDTH * 1.05) / Math.max(1, font.widthOfTextAtSize(text, 1)))
	const width = font.widthOfTextAtSize(text, size)
	const capHeight = size * 0.73
	const angle = Math.atan2(PAGE_HEIGHT, PAGE_WIDTH) * 0.82
	const cos = Math.cos(angle)
	const sin = Math.sin(angle)
	const x = PAGE_WIDTH / 2 - (width / 2) * cos + (capHeight / 2) * sin
	const y = PAGE_HEIGHT / 2 - (width / 2) * sin - (capHeight / 2) * cos
	page.drawText(text, { x, y, size, font, color: MARK_COLOR, opacity: 0.09, rotate: degrees((angle * 180) / Math.PI) })
}

/** The six capital letters PDF puts before a subset font's name, derived from the subset so that it is reproducible. */
function subsetTag(bytes: Uint8Array): string {
	const digest = createHash('sha256').update(bytes).digest()
	return Array.from(digest.subarray(0, 6), (byte) => String.fromCharCode(65 + (byte % 26))).join('')
}

/** Every character the layout can draw, including page numbers and the marks the renderer adds itself. */
function layoutCodePoints(layout: DocumentLayout): Set<number> {
	const texts: Array<string> = ['0123456789 …•', layout.running.mark ?? '']
	const runs = (list: ReadonlyArray<Run>) => {
		for (const run of list) texts.push(run.text)
	}
	for (const part of [
		layout.running.headerLeft,
		layout.running.headerRight,
		layout.running.footerLeft,
		layout.running.footerRight,
	])
		runs(part)
	const collect = (blocks: ReadonlyArray<Block>) => {
		for (const item of blocks) visit(item)
	}
	const visit = (item: Block) => {
		switch (item.kind) {
			case 'heading':
				texts.push(item.text)
				break
			case 'paragraph':
			case 'list':
				if (item.kind === 'paragraph') runs(item.runs)
				else item.items.forEach(runs)
				break
			case 'fields':
				for (const row of item.rows) {
					texts.push(row.label)
					runs(row.runs)
				}
				break
			case 'table':
				for (const row of [...(item.head === null ? [] : [item.head]), ...item.rows]) row.forEach(runs)
				break
			case 'figure':
				runs(item.caption)
				for (const figureItem of item.figure.items) if (figureItem.kind === 'text') texts.push(figureItem.text)
				break
			case 'notice':
				texts.push(item.title)
				runs(item.runs)
				break
			case 'keep':
				collect(item.blocks)
				break
			case 'space':
			case 'pagebreak':
				break
			default: {
				const never: never = item
				throw new Error(`Unknown block ${String(never)}`)
			}
		}
	}
	collect(layout.blocks)
	const codePoints = new Set<number>()
	for (const text of texts) for (const char of text) codePoints.add(char.codePointAt(0)!)
	return codePoints
}

/** Renders a layout to PDF bytes. `renderedAt` becomes the creation and modification date. */
export async function renderPdf(layout: DocumentLayout, options: { renderedAt: Date }): Promise<Uint8Array> {
	const doc = await PDFDocument.create({ updateMetadata: false })
	doc.registerFontkit(fontkit)
	const faces: Array<FontFace> = ['inter', 'inter-bold', 'inter-italic', 'merriweather', 'merriweather-bold']
	const fonts = {} as Fonts
	const codePoints = layoutCodePoints(layout)
	// The fonts are cut to the characters of this document (see subsetTrueType) and embedded as they are.
	for (const face of faces) {
		const bytes = subsetTrueType(face, codePoints)
		fonts[face] = await doc.embedFont(bytes, {
			subset: false,
			customName: `${subsetTag(bytes)}+${postscriptName(face)}`,
		})
	}
	const writer = new Writer(doc, fonts)
	for (const item of layout.blocks) block(writer, item)
	decorate(writer, layout)
	doc.setTitle(layout.meta.title, { showInWindowTitleBar: true })
	doc.setSubject(layout.meta.subject)
	doc.setAuthor(layout.meta.author)
	doc.setCreator('Bandproof')
	doc.setProducer('Bandproof document renderer (pdf-lib)')
	doc.setLanguage('en-GB')
	doc.setCreationDate(options.renderedAt)
	doc.setModificationDate(options.renderedAt)
	return doc.save({ useObjectStreams: true })
}
