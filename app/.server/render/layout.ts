/**
 * The block markup that templates produce, parsed into one layout that both renderers draw. The markup is a small,
 * strict XML subset (listed in templates/dossier/dossier.hbs) shared by every controlled document (the dossier, the
 * identity-run record); anything else is a template error. Figures are resolved while parsing, by the document
 * type's own resolver over its data, so renderers see only blocks.
 */
import type { FigureSpec } from '#app/.server/render/figure.ts'

/** A piece of inline text; `field` marks a page number, the page count or a forced line break instead of text. */
export type Run = { text: string; bold: boolean; italic: boolean; field: 'page' | 'pages' | 'break' | null }
export type ParagraphStyle = 'kicker' | 'title' | 'subtitle' | 'body' | 'small' | 'caption' | 'end'
export type Align = 'left' | 'right' | 'center'
export type NoticeTone = 'caution' | 'info' | 'warning'

export type Block =
	| { kind: 'heading'; level: 1 | 2; text: string }
	| { kind: 'paragraph'; style: ParagraphStyle; runs: Array<Run> }
	| { kind: 'fields'; rows: Array<{ label: string; runs: Array<Run> }> }
	| {
			kind: 'table'
			widths: Array<number>
			align: Array<Align>
			head: Array<Array<Run>> | null
			rows: Array<Array<Array<Run>>>
	  }
	| { kind: 'list'; items: Array<Array<Run>> }
	| { kind: 'figure'; figure: FigureSpec; caption: Array<Run>; alt: string }
	| { kind: 'notice'; tone: NoticeTone; title: string; runs: Array<Run> }
	| { kind: 'space'; size: number }
	| { kind: 'pagebreak' }
	/** Blocks kept on one page when they fit on one. */
	| { kind: 'keep'; blocks: Array<Block> }

export type Running = {
	headerLeft: Array<Run>
	headerRight: Array<Run>
	footerLeft: Array<Run>
	footerRight: Array<Run>
	/** Diagonal mark on every page (e.g. DRAFT), or null. */
	mark: string | null
}

export type DocumentLayout = {
	meta: { title: string; subject: string; author: string }
	running: Running
	blocks: Array<Block>
}

/** Figure box in points: the full text width of an A4 page with 20 mm margins, and a readable height. */
export const FIGURE_WIDTH = 483
export const FIGURE_HEIGHT = 236

type Node =
	| { type: 'text'; value: string }
	| { type: 'element'; name: string; attrs: Record<string, string>; children: Array<Node> }

const ENTITIES: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" }

function decode(text: string): string {
	return text.replace(/&(#x[0-9a-f]+|#\d+|[a-z]+);/gi, (whole, name: string) => {
		if (name.startsWith('#x') || name.startsWith('#X')) return String.fromCodePoint(parseInt(name.slice(2), 16))
		if (name.startsWith('#')) return String.fromCodePoint(parseInt(name.slice(1), 10))
		const value = ENTITIES[name]
		if (value === undefined) throw new Error(`Template markup: unknown entity ${whole}`)
		return value
	})
}

/** Parses the strict XML subset. Throws with a position on malformed markup. */
export function parseMarkup(markup: string): Node {
	const root: Node = { type: 'element', name: '#root', attrs: {}, children: [] }
	const stack: Array<Extract<Node, { type: 'element' }>> = [root]
	const tag = /<(\/?)([a-z][a-z0-9-]*)((?:\s+[a-z][a-z0-9-]*="[^"]*")*)\s*(\/?)>/gy
	let i = 0
	while (i < markup.length) {
		const lt = markup.indexOf('<', i)
		const textEnd = lt === -1 ? markup.length : lt
		if (textEnd > i) stack[stack.length - 1]!.children.push({ type: 'text', value: decode(markup.slice(i, textEnd)) })
		if (lt === -1) break
		tag.lastIndex = lt
		const match = tag.exec(markup)
		if (match === null) throw new Error(`Template markup: malformed tag at offset ${lt}: ${markup.slice(lt, lt + 40)}`)
		const [, closing, name, attrText, selfClosing] = match
		if (closing === '/') {
			const open = stack.pop()
			if (open === undefined || open.name !== name)
				throw new Error(`Template markup: </${name}> closes <${open?.name}> at offset ${lt}`)
		} else {
			const attrs: Record<string, string> = {}
			for (const attr of attrText!.matchAll(/([a-z][a-z0-9-]*)="([^"]*)"/g)) attrs[attr[1]!] = decode(attr[2]!)
			const element: Node = { type: 'element', name: name!, attrs, children: [] }
			stack[stack.length - 1]!.children.push(element)
			if (selfClosing !== '/') stack.push(element)
		}
		i = tag.lastIndex
	}
	if (stack.length !== 1) throw new Error(`Template markup: <${stack[stack.length - 1]!.name}> is not closed`)
	const elements = root.children.filter((node) => node.type === 'element')
	if (elements.length !== 1 || root.children.some((node) => node.type === 'text' && node.value.trim() !== '')) {
		throw new Error('Template markup: expected exactly one root element')
	}
	return elements[0]!
}

function elementsOf(node: Node): Array<Extract<Node, { type: 'element' }>> {
	if (node.type !== 'element') return []
	for (const child of node.children) {
		if (child.type === 'text' && child.value.trim() !== '') {
			throw new Error(`Template markup: stray text in <${node.name}>: "${child.value.trim().slice(0, 40)}"`)
		}
	}
	return node.children.filter((child) => child.type === 'element')
}

/** Inline content: text, <b>, <i>, <br/>, and (where allowed) <page/> <pages/>. Whitespace collapses as in HTML. */
function inline(node: Node, allowFields = false): Array<Run> {
	const runs: Array<Run> = []
	const walk = (current: Node, bold: boolean, italic: boolean) => {
		if (current.type === 'text') {
			runs.push({ text: current.value.replace(/\s+/g, ' '), bold, italic, field: null })
			return
		}
		for (const child of current.children) {
			if (child.type === 'text') walk(child, bold, italic)
			else if (child.name === 'b') walk(child, true, italic)
			else if (child.name === 'i') walk(child, bold, true)
			else if (child.name === 'br') runs.push({ text: '', bold, italic, field: 'break' })
			else if (allowFields && (child.name === 'page' || child.name === 'pages'))
				runs.push({ text: '', bold, italic, field: child.name })
			else throw new Error(`Template markup: <${child.name}> is not allowed inside <${current.name}>`)
		}
	}
	walk(node, false, false)
	const merged: Array<Run> = []
	for (const run of runs) {
		const last = merged[merged.length - 1]
		if (
			last !== undefined &&
			run.field === null &&
			last.field === null &&
			last.bold === run.bold &&
			last.italic === run.italic
		) {
			last.text = (last.text + run.text).replace(/ {2,}/g, ' ')
		} else {
			merged.push({ ...run })
		}
	}
	const first = merged[0]
	if (first !== undefined && first.field === null) first.text = first.text.replace(/^ +/, '')
	const last = merged[merged.length - 1]
	if (last !== undefined && last.field === null) last.text = last.text.replace(/ +$/, '')
	for (let k = 0; k < merged.length; k++) {
		// No spaces at either side of a forced line break.
		if (merged[k]!.field !== 'break') continue
		const before = merged[k - 1]
		const after = merged[k + 1]
		if (before !== undefined && before.field === null) before.text = before.text.replace(/ +$/, '')
		if (after !== undefined && after.field === null) after.text = after.text.replace(/^ +/, '')
	}
	for (let k = 1; k < merged.length; k++) {
		// NOTE: a space at the end of one run and the start of the next would print twice.
		if (merged[k - 1]!.text.endsWith(' ') && merged[k]!.text.startsWith(' ')) merged[k]!.text = merged[k]!.text.slice(1)
	}
	return merged.filter((run) => run.field !== null || run.text !== '')
}

/** Every block, with the contents of `keep` groups in place of the groups, in document order. */
export function flatBlocks(blocks: ReadonlyArray<Block>): Array<Block> {
	return blocks.flatMap((item) => (item.kind === 'keep' ? flatBlocks(item.blocks) : [item]))
}

/** Plain text of inline content. */
export function plainText(runs: ReadonlyArray<Run>): string {
	return runs.map((run) => (run.field === 'break' ? ' ' : run.text)).join('')
}

function attr(node: Extract<Node, { type: 'element' }>, name: string): string {
	const value = node.attrs[name]
	if (value === undefined) throw new Error(`Template markup: <${node.name}> needs ${name}="…"`)
	return value
}

function oneOf<T extends string>(value: string, allowed: ReadonlyArray<T>, what: string): T {
	if (!(allowed as ReadonlyArray<string>).includes(value))
		throw new Error(`Template markup: ${what} "${value}" is not one of ${allowed.join(', ')}`)
	return value as T
}

const PARAGRAPH_STYLES = ['kicker', 'title', 'subtitle', 'body', 'small', 'caption', 'end'] as const
const ALIGNS = ['left', 'right', 'center'] as const
const TONES = ['caution', 'info', 'warning'] as const

/**
 * Draws a `<figure source="…">` of a document type from that type's data: `attr` reads the element's attributes
 * (throwing when one is missing). Throws on a source the type does not know.
 */
export type FigureResolver = (source: string, attr: (name: string) => string) => FigureSpec

function figureBlock(node: Extract<Node, { type: 'element' }>, figures: FigureResolver): Block {
	const caption = inline(node)
	const figure = figures(attr(node, 'source'), (name) => attr(node, name))
	return { kind: 'figure', figure, caption, alt: plainText(caption) }
}

function tableBlock(node: Extract<Node, { type: 'element' }>): Block {
	const widths = attr(node, 'widths').split(',').map(Number)
	if (widths.some((w) => !(w > 0))) throw new Error('Template markup: table widths must be positive numbers')
	const align = (node.attrs['align'] ?? widths.map(() => 'left').join(','))
		.split(',')
		.map((a) => oneOf(a.trim(), ALIGNS, 'align'))
	if (align.length !== widths.length) throw new Error('Template markup: table align and widths differ in length')
	let head: Array<Array<Run>> | null = null
	const rows: Array<Array<Array<Run>>> = []
	for (const tr of elementsOf(node)) {
		if (tr.name !== 'tr') throw new Error(`Template markup: <${tr.name}> inside <table>`)
		const cells = elementsOf(tr).map((td) => {
			if (td.name !== 'td') throw new Error(`Template markup: <${td.name}> inside <tr>`)
			return inline(td)
		})
		if (cells.length !== widths.length)
			throw new Error(`Template markup: a row has ${cells.length} cells for ${widths.length} columns`)
		if (tr.attrs['head'] === 'true') {
			if (head !== null || rows.length > 0) throw new Error('Template markup: the head row must come first, once')
			head = cells
		} else {
			rows.push(cells)
		}
	}
	const total = widths.reduce((sum, w) => sum + w, 0)
	return { kind: 'table', widths: widths.map((w) => w / total), align, head, rows }
}

function block(node: Extract<Node, { type: 'element' }>, figures: FigureResolver): Block {
	switch (node.name) {
		case 'h1':
		case 'h2':
			return { kind: 'heading', level: node.name === 'h1' ? 1 : 2, text: plainText(inline(node)) }
		case 'p':
			return {
				kind: 'paragraph',
				style: oneOf(attr(node, 'class'), PARAGRAPH_STYLES, 'paragraph class'),
				runs: inline(node),
			}
		case 'fields':
			return {
				kind: 'fields',
				rows: elementsOf(node).map((field) => {
					if (field.name !== 'field') throw new Error(`Template markup: <${field.name}> inside <fields>`)
					return { label: attr(field, 'label'), runs: inline(field) }
				}),
			}
		case 'table':
			return tableBlock(node)
		case 'ul':
			return {
				kind: 'list',
				items: elementsOf(node).map((li) => {
					if (li.name !== 'li') throw new Error(`Template markup: <${li.name}> inside <ul>`)
					return inline(li)
				}),
			}
		case 'figure':
			return figureBlock(node, figures)
		case 'notice':
			return {
				kind: 'notice',
				tone: oneOf(attr(node, 'tone'), TONES, 'notice tone'),
				title: attr(node, 'title'),
				runs: inline(node),
			}
		case 'space':
			return { kind: 'space', size: Number(attr(node, 'size')) }
		case 'pagebreak':
			return { kind: 'pagebreak' }
		case 'keep':
			return { kind: 'keep', blocks: elementsOf(node).map((child) => block(child, figures)) }
		default:
			throw new Error(`Template markup: unknown block <${node.name}>`)
	}
}

/**
 * Turns expanded template markup into the layout both renderers draw. `root` names the document type's root element
 * (`dossier`, `run-record`); `figures` draws its figures. Throws on any template error.
 */
export function buildLayout(markup: string, options: { root: string; figures: FigureResolver }): DocumentLayout {
	const root = parseMarkup(markup)
	if (root.type !== 'element' || root.name !== options.root)
		throw new Error(`Template markup: the root must be <${options.root}>`)
	let meta: DocumentLayout['meta'] | null = null
	let running: Running | null = null
	const blocks: Array<Block> = []
	for (const node of elementsOf(root)) {
		if (node.name === 'meta') {
			meta = { title: attr(node, 'title'), subject: attr(node, 'subject'), author: attr(node, 'author') }
		} else if (node.name === 'running') {
			const parts = new Map(elementsOf(node).map((part) => [part.name, part]))
			const part = (name: string) => {
				const found = parts.get(name)
				if (found === undefined) throw new Error(`Template markup: <running> needs <${name}>`)
				return inline(found, true)
			}
			const mark = parts.get('mark')
			running = {
				headerLeft: part('header-left'),
				headerRight: part('header-right'),
				footerLeft: part('footer-left'),
				footerRight: part('footer-right'),
				mark: mark === undefined ? null : plainText(inline(mark)) || null,
			}
		} else {
			blocks.push(block(node, options.figures))
		}
	}
	if (meta === null || running === null) throw new Error('Template markup: <meta> and <running> are required')
	return { meta, running, blocks }
}
