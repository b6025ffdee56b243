/**
 * DOCX rendering of a document layout with the `docx` package: A4, the same blocks as the PDF, figures as PNG images
 * rasterised by resvg from the figures' SVG (with the TTF fonts, so their labels draw), header and footer with PAGE
 * and NUMPAGES fields, and the page mark as a watermark in the header. Deterministic: the package is re-zipped with
 * timestamps and generated ids fixed from `renderedAt`.
 */
import { renderAsync } from '@resvg/resvg-js'
import {
	AlignmentType,
	BorderStyle,
	Document,
	Footer,
	Header,
	HeadingLevel,
	ImageRun,
	Packer,
	PageBreak,
	PageNumber,
	Paragraph,
	ShadingType,
	Tab,
	Table,
	TableCell,
	TableLayoutType,
	TableRow,
	TabStopType,
	TextRun,
	WidthType,
} from 'docx'
import { TextWatermark } from 'docx/watermarks'
import { figureSvg, type FigureSpec } from '#app/.server/render/figure.ts'
import { fontPath } from '#app/.server/render/fonts.ts'
import {
	type Align,
	type Block,
	type DocumentLayout,
	flatBlocks,
	type NoticeTone,
	type ParagraphStyle,
	type Run,
} from '#app/.server/render/layout.ts'
import { readZip, writeZip } from '#app/.server/render/zip.ts'

/** Twips per point. */
const TW = 20
const PAGE = { width: 11906, height: 16838 }
const MARGIN_X = 1120
const CONTENT_WIDTH = PAGE.width - 2 * MARGIN_X
/** Figures are rasterised at this many pixels per point (about 216 dpi). */
const FIGURE_ZOOM = 3

const COLORS = {
	ink: '1D2430',
	soft: '4A5363',
	faint: '6B7383',
	rule: 'E3DFD4',
	ruleStrong: 'C9C3B3',
	accent: '2C5C5F',
	headFill: 'F3F1EA',
	mark: '9B2F22',
}
const TONES: Record<NoticeTone, { bar: string; fill: string }> = {
	caution: { bar: '8A5A0B', fill: 'FBF1DC' },
	info: { bar: COLORS.accent, fill: 'E3EEEC' },
	warning: { bar: '9B2F22', fill: 'F8E7E3' },
}

type RunStyle = { font: string; size: number; color: string; bold?: boolean; italics?: boolean }
const INTER = 'Inter'
const MERRIWEATHER = 'Merriweather'
const PARAGRAPHS: Record<ParagraphStyle, RunStyle & { before: number; after: number; align: Align }> = {
	kicker: { font: INTER, size: 8.5, color: COLORS.accent, bold: true, before: 0, after: 2, align: 'left' },
	title: { font: MERRIWEATHER, size: 21, color: COLORS.ink, bold: true, before: 18, after: 6, align: 'left' },
	subtitle: { font: MERRIWEATHER, size: 11.5, color: COLORS.soft, before: 0, after: 18, align: 'left' },
	body: { font: INTER, size: 9.5, color: COLORS.ink, before: 0, after: 7, align: 'left' },
	small: { font: INTER, size: 8.5, color: COLORS.ink, before: 2, after: 3, align: 'left' },
	caption: { font: INTER, size: 8, color: COLORS.soft, italics: true, before: 4, after: 12, align: 'left' },
	end: { font: INTER, size: 8.5, color: COLORS.soft, italics: true, before: 0, after: 0, align: 'center' },
}
const CELL: RunStyle = { font: INTER, size: 8.5, color: COLORS.ink }
const CELL_HEAD: RunStyle = { ...CELL, size: 8, bold: true }
const FIELD_LABEL: RunStyle = { ...CELL, color: COLORS.soft }
const RUNNING: RunStyle = { font: INTER, size: 7.5, color: COLORS.soft }
const FIELD_LABEL_SHARE = 0.27

function alignment(align: Align): (typeof AlignmentType)[keyof typeof AlignmentType] {
	return align === 'right' ? AlignmentType.RIGHT : align === 'center' ? AlignmentType.CENTER : AlignmentType.LEFT
}

function textRuns(runs: ReadonlyArray<Run>, style: RunStyle): Array<TextRun> {
	return runs.map((run) => {
		const base = {
			font: style.font,
			size: style.size * 2,
			color: style.color,
			bold: run.bold || style.bold === true,
			italics: run.italic || style.italics === true,
		}
		if (run.field === 'page') return new TextRun({ ...base, children: [PageNumber.CURRENT] })
		if (run.field === 'pages') return new TextRun({ ...base, children: [PageNumber.TOTAL_PAGES] })
		if (run.field === 'break') return new TextRun({ ...base, break: 1 })
		return new TextRun({ ...base, text: run.text })
	})
}

function plainRun(text: string): Run {
	return { text, bold: false, italic: false, field: null }
}

function paragraph(runs: ReadonlyArray<Run>, style: (typeof PARAGRAPHS)[ParagraphStyle], keepNext = false): Paragraph {
	return new Paragraph({
		children: textRuns(runs, style),
		alignment: alignment(style.align),
		spacing: {
			before: style.before * TW,
			after: style.after * TW,
			line: Math.round(style.size * 1.45 * TW),
			lineRule: 'atLeast',
		},
		keepNext,
	})
}

const NONE = { style: BorderStyle.NONE, size: 0, color: 'FFFFFF' }
const THIN = { style: BorderStyle.SINGLE, size: 4, color: COLORS.rule }
const STRONG = { style: BorderStyle.SINGLE, size: 5, color: COLORS.ruleStrong }

function cell(runs: ReadonlyArray<Run>, style: RunStyle, width: number, align: Align, fill: string | null): TableCell {
	return new TableCell({
		width: { size: width, type: WidthType.DXA },
		margins: { top: 4 * TW, bottom: 4 * TW, left: 5 * TW, right: 5 * TW },
		...(fill === null ? {} : { shading: { fill, type: ShadingType.CLEAR, color: 'auto' } }),
		children: [
			new Paragraph({
				children: textRuns(runs, style),
				alignment: alignment(align),
				spacing: { before: 0, after: 0, line: Math.round(style.size * 1.35 * TW), lineRule: 'atLeast' },
			}),
		],
	})
}

function table(
	widths: ReadonlyArray<number>,
	head: Array<TableCell> | null,
	rows: Array<Array<TableCell>>,
): Array<Paragraph | Table> {
	const tableRows = [
		...(head === null ? [] : [new TableRow({ children: head, tableHeader: true, cantSplit: true })]),
		...rows.map((cells) => new TableRow({ children: cells, cantSplit: true })),
	]
	return [
		new Table({
			rows: tableRows,
			width: { size: CONTENT_WIDTH, type: WidthType.DXA },
			columnWidths: [...widths],
			layout: TableLayoutType.FIXED,
			// A table without a head row (label and value pairs) has no top rule: it follows a heading's own rule.
			borders: {
				top: head === null ? NONE : STRONG,
				bottom: STRONG,
				left: NONE,
				right: NONE,
				insideHorizontal: THIN,
				insideVertical: NONE,
			},
		}),
		new Paragraph({ children: [], spacing: { before: 0, after: 8 * TW } }),
	]
}

/** Rasterises every figure of the layout, off the main thread and in parallel (resvg's async renderer). */
async function figurePngs(blocks: ReadonlyArray<Block>): Promise<Map<FigureSpec, Uint8Array>> {
	const figures = flatBlocks(blocks).flatMap((item) => (item.kind === 'figure' ? [item.figure] : []))
	const options = {
		fitTo: { mode: 'zoom' as const, value: FIGURE_ZOOM },
		background: '#ffffff',
		font: { fontFiles: [fontPath('inter'), fontPath('inter-bold')], loadSystemFonts: false, defaultFontFamily: INTER },
	}
	const images = await Promise.all(figures.map((figure) => renderAsync(figureSvg(figure), options)))
	return new Map(figures.map((figure, i) => [figure, new Uint8Array(images[i]!.asPng())]))
}

function blockChildren(item: Block, pngs: ReadonlyMap<FigureSpec, Uint8Array>): Array<Paragraph | Table> {
	switch (item.kind) {
		case 'keep':
			// Word keeps paragraphs together through "keep with next"; headings and figures already have it.
			return item.blocks.flatMap((child) => blockChildren(child, pngs))
		case 'heading':
			return [
				new Paragraph({
					heading: item.level === 1 ? HeadingLevel.HEADING_1 : HeadingLevel.HEADING_2,
					children: [new TextRun({ text: item.text })],
					keepNext: true,
				}),
			]
		case 'paragraph':
			return [paragraph(item.runs, PARAGRAPHS[item.style])]
		case 'fields': {
			const widths = [
				Math.round(CONTENT_WIDTH * FIELD_LABEL_SHARE),
				CONTENT_WIDTH - Math.round(CONTENT_WIDTH * FIELD_LABEL_SHARE),
			]
			const rows = item.rows.map((row) => [
				cell([plainRun(row.label)], FIELD_LABEL, widths[0]!, 'left', null),
				cell(row.runs, CELL, widths[1]!, 'left', null),
			])
			return table(widths, null, rows)
		}
		case 'table': {
			const widths = item.widths.map((share) => Math.round(share * CONTENT_WIDTH))
			const head =
				item.head === null
					? null
					: item.head.map((runs, i) => cell(runs, CELL_HEAD, widths[i]!, item.align[i]!, COLORS.headFill))
			const rows = item.rows.map((row) => row.map((runs, i) => cell(runs, CELL, widths[i]!, item.align[i]!, null)))
			return table(widths, head, rows)
		}
		case 'list':
			return item.items.map(
				(runs, k) =>
					new Paragraph({
						children: [
							new TextRun({ text: '•', font: INTER, size: 18, color: COLORS.accent }),
							new TextRun({ children: [new Tab()] }),
							...textRuns(runs, { ...CELL, size: 9 }),
						],
						tabStops: [{ type: TabStopType.LEFT, position: 320 }],
						indent: { left: 320, hanging: 240 },
						spacing: { before: 0, after: k === item.items.length - 1 ? 8 * TW : 2 * TW },
					}),
			)
		case 'figure': {
			const png = pngs.get(item.figure)
			if (png === undefined) throw new Error('Figure was not rasterised')
			return [
				new Paragraph({
					keepNext: true,
					spacing: { before: 4 * TW, after: 0 },
					children: [
						new ImageRun({
							type: 'png',
							data: png,
							// docx sizes images in CSS pixels: 96 per inch, 72 points per inch.
							transformation: {
								width: Math.round((item.figure.width * 96) / 72),
								height: Math.round((item.figure.height * 96) / 72),
							},
							altText: { name: 'Figure', title: 'Figure', description: item.alt },
						}),
					],
				}),
				paragraph(item.caption, PARAGRAPHS.caption),
			]
		}
		case 'notice': {
			const tone = TONES[item.tone]
			return [
				new Table({
					width: { size: CONTENT_WIDTH, type: WidthType.DXA },
					columnWidths: [CONTENT_WIDTH],
					layout: TableLayoutType.FIXED,
					borders: {
						top: NONE,
						bottom: NONE,
						right: NONE,
						insideHorizontal: NONE,
						insideVertical: NONE,
						left: { style: BorderStyle.SINGLE, size: 24, color: tone.bar },
					},
					rows: [
						new TableRow({
							cantSplit: true,
							children: [
								new TableCell({
									width: { size: CONTENT_WIDTH, type: WidthType.DXA },
									shading: { fill: tone.fill, type: ShadingType.CLEAR, color: 'auto' },
									margins: { top: 8 * TW, bottom: 8 * TW, left: 10 * TW, right: 9 * TW },
									children: [
										new Paragraph({
											children: textRuns([plainRun(item.title)], { ...CELL, size: 9, bold: true }),
											spacing: { before: 0, after: 2 * TW },
										}),
										new Paragraph({
											children: textRuns(item.runs, CELL),
											spacing: { before: 0, after: 0, line: Math.round(8.5 * 1.45 * TW), lineRule: 'atLeast' },
										}),
									],
								}),
							],
						}),
					],
				}),
				new Paragraph({ children: [], spacing: { before: 0, after: 10 * TW } }),
			]
		}
		case 'space':
			return [new Paragraph({ children: [], spacing: { before: item.size * TW, after: 0 } })]
		case 'pagebreak':
			return [new Paragraph({ children: [new PageBreak()] })]
		default: {
			const never: never = item
			throw new Error(`Unknown block ${String(never)}`)
		}
	}
}

function band(
	left: ReadonlyArray<Run>,
	right: ReadonlyArray<Run>,
	border: 'top' | 'bottom',
	mark: string | null,
): Paragraph {
	const rule = { style: BorderStyle.SINGLE, size: 4, color: COLORS.ruleStrong, space: 4 }
	return new Paragraph({
		tabStops: [{ type: TabStopType.RIGHT, position: CONTENT_WIDTH }],
		border: border === 'top' ? { top: rule } : { bottom: rule },
		children: [
			...textRuns(left, RUNNING),
			new TextRun({ children: [new Tab()] }),
			...(mark === null
				? []
				: [new TextRun({ text: `${mark}  `, font: INTER, size: RUNNING.size * 2, bold: true, color: COLORS.mark })]),
			...textRuns(right, RUNNING),
		],
	})
}

/** Fixes what `docx` makes differ between two packs of the same document: timestamps and random ids. */
function normalize(entries: ReturnType<typeof readZip>, renderedAt: Date): ReturnType<typeof readZip> {
	const stamp = renderedAt.toISOString().replace(/\.\d{3}Z$/, 'Z')
	const ids = new Map<string, string>()
	let drawingId = 0
	const encoder = new TextEncoder()
	const decoder = new TextDecoder()
	return entries.map((entry) => {
		if (!/\.(xml|rels)$/.test(entry.name)) return entry
		const original = decoder.decode(entry.data)
		let xml = original
		if (entry.name === 'docProps/core.xml') {
			xml = xml
				.replace(/(<dcterms:created[^>]*>)[^<]*(<\/dcterms:created>)/, `$1${stamp}$2`)
				.replace(/(<dcterms:modified[^>]*>)[^<]*(<\/dcterms:modified>)/, `$1${stamp}$2`)
		}
		// NOTE: docx numbers drawings with a counter that lives as long as the process; number them per package.
		xml = xml.replace(/<wp:docPr id="\d+"/g, () => `<wp:docPr id="${++drawingId}"`)
		// NOTE: docx names watermark shapes with a random suffix; number them in order of appearance instead.
		xml = xml.replace(/PowerPlusWaterMarkObject[0-9a-z_-]+/g, (id) => {
			let fixed = ids.get(id)
			if (fixed === undefined) {
				fixed = `PowerPlusWaterMarkObject${ids.size + 1}`
				ids.set(id, fixed)
			}
			return fixed
		})
		// Always compressed again here, changed or not: whether an id needed renumbering must not change the bytes.
		return { name: entry.name, data: xml === original ? entry.data : encoder.encode(xml), raw: null }
	})
}

/** Renders a layout to DOCX bytes. `renderedAt` becomes the core properties' dates and every ZIP timestamp. */
export async function renderDocx(layout: DocumentLayout, options: { renderedAt: Date }): Promise<Uint8Array> {
	const { running } = layout
	const pngs = await figurePngs(layout.blocks)
	const headerChildren = [band(running.headerLeft, running.headerRight, 'bottom', running.mark)]
	const header = new Header({
		children:
			running.mark === null
				? headerChildren
				: [
						...headerChildren,
						new Paragraph({
							children: [
								new TextWatermark({ text: running.mark, font: INTER, color: COLORS.mark, opacity: 0.12, bold: true }),
							],
						}),
					],
	})
	const doc = new Document({
		title: layout.meta.title,
		subject: layout.meta.subject,
		creator: layout.meta.author,
		lastModifiedBy: 'Bandproof',
		description: layout.meta.subject,
		revision: 1,
		styles: {
			default: {
				document: { run: { font: INTER, size: 19, color: COLORS.ink }, paragraph: { spacing: { after: 0 } } },
				heading1: {
					run: { font: MERRIWEATHER, size: 26, bold: true, color: COLORS.ink },
					paragraph: {
						spacing: { before: 16 * TW, after: 8 * TW },
						keepNext: true,
						border: { bottom: { style: BorderStyle.SINGLE, size: 5, color: COLORS.ruleStrong, space: 2 } },
					},
				},
				heading2: {
					run: { font: MERRIWEATHER, size: 21, bold: true, color: COLORS.ink },
					paragraph: { spacing: { before: 12 * TW, after: 5 * TW }, keepNext: true },
				},
			},
		},
		sections: [
			{
				properties: {
					page: {
						size: { width: PAGE.width, height: PAGE.height },
						margin: {
							top: 70 * TW,
							bottom: 64 * TW,
							left: MARGIN_X,
							right: MARGIN_X,
							header: 26 * TW,
							footer: 26 * TW,
						},
					},
				},
				headers: { default: header },
				footers: { default: new Footer({ children: [band(running.footerLeft, running.footerRight, 'top', null)] }) },
				children: layout.blocks.flatMap((item) => blockChildren(item, pngs)),
			},
		],
	})
	const packed = new Uint8Array(await Packer.toBuffer(doc))
	return writeZip(normalize(readZip(packed), options.renderedAt), options.renderedAt)
}
