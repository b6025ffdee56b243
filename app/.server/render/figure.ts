/**
 * Spectrum figures for documents, built once as a list of drawing primitives (points, y down, origin at the figure's
 * top-left) that the PDF renderer draws as vectors and `figureSvg` turns into the SVG that resvg rasterises for DOCX.
 * Path strings come from d3-shape over d3 scales. The wavenumber axis runs from high to low, as is usual in the field.
 */
import { scaleLinear } from 'd3-scale'
import { line } from 'd3-shape'
import type { FigurePoint } from '#shared/dossier/model.ts'
import { type FontFace, measureText } from '#app/.server/render/fonts.ts'

export type FigureText = {
	kind: 'text'
	x: number
	/** Baseline. */
	y: number
	text: string
	size: number
	anchor: 'start' | 'middle' | 'end'
	/** 0, or −90 for text reading upwards. */
	rotate: 0 | -90
	bold: boolean
	color: string
}
export type FigurePrimitive =
	| { kind: 'path'; d: string; stroke: string; width: number }
	| { kind: 'rect'; x: number; y: number; w: number; h: number; fill: string; opacity: number; stroke: string | null }
	| { kind: 'line'; x1: number; y1: number; x2: number; y2: number; stroke: string; width: number; dash: number | null }
	| FigureText

export type FigureSpec = { width: number; height: number; items: Array<FigurePrimitive> }

export type SpectrumFigureInput = {
	width: number
	height: number
	xLabel: string
	yLabel: string
	series: Array<{ points: ReadonlyArray<FigurePoint>; color: string; width: number; label: string | null }>
	markers: ReadonlyArray<{ position: number; label: string }>
	regions: ReadonlyArray<{ from: number; to: number; label: string | null }>
}

/** Document palette: the app's own tokens (app.css). */
export const FIGURE_COLORS = {
	ink: '#1d2430',
	soft: '#4a5363',
	faint: '#6b7383',
	grid: '#ece8de',
	axis: '#c9c3b3',
	region: '#f1eee6',
	reference: '#1d2430',
	sample: '#b4531f',
	marker: '#2c5c5f',
} as const

const TICK_SIZE = 7
const LABEL_SIZE = 7.5
const MARKER_SIZE = 6.5
const REGION_SIZE = 6
/** Beyond this many band markers the dashed guides through the plot would hide the spectrum; ticks remain. */
const MAX_MARKER_GUIDES = 30
/** Horizontal room one upright (rotated) marker label needs, pt. */
const MARKER_PITCH = MARKER_SIZE * 1.25

function face(bold: boolean): FontFace {
	return bold ? 'inter-bold' : 'inter'
}

function round(value: number): number {
	return Math.round(value * 100) / 100
}

/**
 * Spreads label centres so that neighbours are at least `pitch` apart, keeping them as near their anchors as
 * possible and inside [min, max]. Input in any order; output in input order.
 */
function spreadLabels(anchors: ReadonlyArray<number>, pitch: number, min: number, max: number): Array<number> {
	const order = anchors.map((x, i) => ({ x, i })).sort((a, b) => a.x - b.x || a.i - b.i)
	const placed = order.map((item) => item.x)
	for (let k = 0; k < placed.length; k++) placed[k] = Math.max(placed[k]!, k === 0 ? min : placed[k - 1]! + pitch)
	const overflow = placed.length > 0 ? placed[placed.length - 1]! - max : 0
	if (overflow > 0) {
		for (let k = placed.length - 1; k >= 0; k--) {
			placed[k] = Math.min(placed[k]!, k === placed.length - 1 ? max : placed[k + 1]! - pitch)
		}
	}
	const out = new Array<number>(anchors.length)
	order.forEach((item, k) => (out[item.i] = placed[k]!))
	return out
}

/** Labels, left to right, only where they do not crowd the previous one (null = tick without a label). */
function labelsWithRoom(anchors: ReadonlyArray<number>, pitch: number): Array<number | null> {
	const order = anchors.map((x, i) => ({ x, i })).sort((a, b) => a.x - b.x || a.i - b.i)
	const out = new Array<number | null>(anchors.length).fill(null)
	let last = -Infinity
	for (const item of order) {
		if (item.x - last < pitch) continue
		out[item.i] = item.x
		last = item.x
	}
	return out
}

/** A spectrum plot (one or more series) with axes, exclusion regions, band markers and a legend. Pure. */
export function spectrumFigure(input: SpectrumFigureInput): FigureSpec {
	const items: Array<FigurePrimitive> = []
	const all = input.series.flatMap((series) => series.points)
	let xMin = Infinity
	let xMax = -Infinity
	let yMin = 0
	let yMax = -Infinity
	for (const [x, y] of all) {
		xMin = Math.min(xMin, x)
		xMax = Math.max(xMax, x)
		yMin = Math.min(yMin, y)
		yMax = Math.max(yMax, y)
	}
	if (!Number.isFinite(xMin) || xMax <= xMin) throw new Error('A figure needs at least two distinct wavenumbers')
	if (!(yMax > yMin)) yMax = yMin + 1
	const y = scaleLinear()
		.domain([yMin, yMax + (yMax - yMin) * 0.08])
		.nice(5)
	const yTicks = y.ticks(5)
	const yFormat = y.tickFormat(5)
	const yTickWidth = Math.max(...yTicks.map((tick) => measureText(yFormat(tick), TICK_SIZE)))

	const markerLabelHeight = Math.max(0, ...input.markers.map((marker) => measureText(marker.label, MARKER_SIZE)))
	const plot = {
		left: round(yTickWidth + 6 + LABEL_SIZE * 1.6),
		right: input.width - 10,
		top: input.markers.length > 0 ? round(markerLabelHeight + 16) : 10,
		bottom: input.height - 30,
	}
	const x = scaleLinear().domain([xMax, xMin]).range([plot.left, plot.right])
	y.range([plot.bottom, plot.top])

	// Exclusion regions behind everything else.
	for (const region of input.regions) {
		const from = Math.max(region.from, xMin)
		const to = Math.min(region.to, xMax)
		if (to <= from) continue
		const left = round(x(to))
		const w = round(x(from) - x(to))
		items.push({
			kind: 'rect',
			x: left,
			y: plot.top,
			w,
			h: round(plot.bottom - plot.top),
			fill: FIGURE_COLORS.region,
			opacity: 1,
			stroke: null,
		})
		if (
			region.label !== null &&
			w >= REGION_SIZE * 1.3 &&
			measureText(region.label, REGION_SIZE) < plot.bottom - plot.top - 8
		) {
			// Upright, hanging from the top of the plot, where spectra are usually low.
			items.push({
				kind: 'text',
				x: round(left + w / 2 + REGION_SIZE * 0.35),
				y: plot.top + 4,
				text: region.label,
				size: REGION_SIZE,
				anchor: 'end',
				rotate: -90,
				bold: false,
				color: FIGURE_COLORS.faint,
			})
		}
	}

	// Grid and axes.
	for (const tick of yTicks) {
		const ty = round(y(tick))
		items.push({
			kind: 'line',
			x1: plot.left,
			y1: ty,
			x2: plot.right,
			y2: ty,
			stroke: FIGURE_COLORS.grid,
			width: 0.5,
			dash: null,
		})
		items.push({
			kind: 'text',
			x: plot.left - 4,
			y: round(ty + TICK_SIZE * 0.35),
			text: yFormat(tick),
			size: TICK_SIZE,
			anchor: 'end',
			rotate: 0,
			bold: false,
			color: FIGURE_COLORS.soft,
		})
	}
	for (const tick of x.ticks(16)) {
		const tx = round(x(tick))
		items.push({
			kind: 'line',
			x1: tx,
			y1: plot.bottom,
			x2: tx,
			y2: plot.bottom + 2,
			stroke: FIGURE_COLORS.faint,
			width: 0.5,
			dash: null,
		})
	}
	for (const tick of x.ticks(8)) {
		const tx = round(x(tick))
		items.push({
			kind: 'line',
			x1: tx,
			y1: plot.top,
			x2: tx,
			y2: plot.bottom,
			stroke: FIGURE_COLORS.grid,
			width: 0.5,
			dash: null,
		})
		items.push({
			kind: 'line',
			x1: tx,
			y1: plot.bottom,
			x2: tx,
			y2: plot.bottom + 4,
			stroke: FIGURE_COLORS.soft,
			width: 0.6,
			dash: null,
		})
		items.push({
			kind: 'text',
			x: tx,
			y: plot.bottom + 6 + TICK_SIZE,
			text: String(tick),
			size: TICK_SIZE,
			anchor: 'middle',
			rotate: 0,
			bold: false,
			color: FIGURE_COLORS.soft,
		})
	}
	items.push({
		kind: 'rect',
		x: plot.left,
		y: plot.top,
		w: round(plot.right - plot.left),
		h: round(plot.bottom - plot.top),
		fill: 'none',
		opacity: 1,
		stroke: FIGURE_COLORS.axis,
	})
	items.push({
		kind: 'text',
		x: round((plot.left + plot.right) / 2),
		y: input.height - 4,
		text: input.xLabel,
		size: LABEL_SIZE,
		anchor: 'middle',
		rotate: 0,
		bold: true,
		color: FIGURE_COLORS.ink,
	})
	items.push({
		kind: 'text',
		x: round(LABEL_SIZE * 1.0),
		y: round((plot.top + plot.bottom) / 2),
		text: input.yLabel,
		size: LABEL_SIZE,
		anchor: 'middle',
		rotate: -90,
		bold: true,
		color: FIGURE_COLORS.ink,
	})

	// Band markers: a guide through the plot, a tick above it and an upright label, spread apart when crowded.
	const markers = input.markers.filter((marker) => marker.position >= xMin && marker.position <= xMax)
	const anchors = markers.map((marker) => x(marker.position))
	const room = plot.right - plot.left
	// When every label fits, crowded ones are nudged apart; when they cannot all fit, only those with room are labelled.
	const placed: Array<number | null> =
		markers.length * MARKER_PITCH <= room
			? spreadLabels(anchors, MARKER_PITCH, plot.left + MARKER_PITCH / 2, plot.right - MARKER_PITCH / 2)
			: labelsWithRoom(anchors, MARKER_PITCH)
	const guides = markers.length <= MAX_MARKER_GUIDES
	markers.forEach((marker, i) => {
		const mx = round(anchors[i]!)
		const lx = placed[i]
		if (guides)
			items.push({
				kind: 'line',
				x1: mx,
				y1: plot.top,
				x2: mx,
				y2: plot.bottom,
				stroke: FIGURE_COLORS.marker,
				width: 0.4,
				dash: 2,
			})
		items.push({
			kind: 'line',
			x1: mx,
			y1: plot.top,
			x2: mx,
			y2: plot.top - 4,
			stroke: FIGURE_COLORS.marker,
			width: 0.8,
			dash: null,
		})
		if (lx === null || lx === undefined) return
		items.push({
			kind: 'line',
			x1: mx,
			y1: plot.top - 4,
			x2: round(lx),
			y2: plot.top - 9,
			stroke: FIGURE_COLORS.marker,
			width: 0.5,
			dash: null,
		})
		items.push({
			kind: 'text',
			x: round(lx + MARKER_SIZE * 0.35),
			y: plot.top - 11,
			text: marker.label,
			size: MARKER_SIZE,
			anchor: 'start',
			rotate: -90,
			bold: false,
			color: FIGURE_COLORS.marker,
		})
	})

	// Series, sorted by wavenumber so that the path never doubles back.
	for (const series of input.series) {
		const sorted = [...series.points].sort((a, b) => b[0] - a[0])
		const d = line<FigurePoint>()
			.x((point) => x(point[0]))
			.y((point) => y(point[1]))
			.digits(2)(sorted)
		if (d !== null) items.push({ kind: 'path', d, stroke: series.color, width: series.width })
	}

	// Legend, top right inside the plot.
	const legend = input.series.filter((series) => series.label !== null)
	if (legend.length > 1) {
		const entries = legend.map((series) => ({ series, w: 16 + measureText(series.label!, TICK_SIZE) + 10 }))
		const total = entries.reduce((sum, entry) => sum + entry.w, 0)
		let lx = plot.right - total - 6
		const ly = plot.top + 6
		items.push({
			kind: 'rect',
			x: round(lx - 4),
			y: ly,
			w: round(total + 6),
			h: 12,
			fill: '#ffffff',
			opacity: 0.9,
			stroke: FIGURE_COLORS.axis,
		})
		for (const entry of entries) {
			items.push({
				kind: 'line',
				x1: round(lx),
				y1: ly + 6,
				x2: round(lx + 12),
				y2: ly + 6,
				stroke: entry.series.color,
				width: 1.4,
				dash: null,
			})
			items.push({
				kind: 'text',
				x: round(lx + 16),
				y: round(ly + 6 + TICK_SIZE * 0.35),
				text: entry.series.label!,
				size: TICK_SIZE,
				anchor: 'start',
				rotate: 0,
				bold: false,
				color: FIGURE_COLORS.ink,
			})
			lx += entry.w
		}
	}
	return { width: input.width, height: input.height, items }
}

function escapeXml(text: string): string {
	return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;')
}

/** The figure as a standalone SVG (user units = points), white background, text in Inter. */
export function figureSvg(spec: FigureSpec): string {
	const parts: Array<string> = [
		`<svg xmlns="http://www.w3.org/2000/svg" width="${spec.width}" height="${spec.height}" viewBox="0 0 ${spec.width} ${spec.height}">`,
		`<rect x="0" y="0" width="${spec.width}" height="${spec.height}" fill="#ffffff"/>`,
	]
	for (const item of spec.items) {
		switch (item.kind) {
			case 'path':
				parts.push(
					`<path d="${item.d}" fill="none" stroke="${item.stroke}" stroke-width="${item.width}" stroke-linejoin="round"/>`,
				)
				break
			case 'rect':
				parts.push(
					`<rect x="${item.x}" y="${item.y}" width="${item.w}" height="${item.h}" fill="${item.fill}" fill-opacity="${item.opacity}"${item.stroke === null ? '' : ` stroke="${item.stroke}" stroke-width="0.6"`}/>`,
				)
				break
			case 'line':
				parts.push(
					`<line x1="${item.x1}" y1="${item.y1}" x2="${item.x2}" y2="${item.y2}" stroke="${item.stroke}" stroke-width="${item.width}"${item.dash === null ? '' : ` stroke-dasharray="${item.dash} ${item.dash}"`}/>`,
				)
				break
			case 'text': {
				const transform = item.rotate === 0 ? '' : ` transform="rotate(${item.rotate} ${item.x} ${item.y})"`
				parts.push(
					`<text x="${item.x}" y="${item.y}" font-family="Inter" font-size="${item.size}" font-weight="${item.bold ? 600 : 400}" fill="${item.color}" text-anchor="${item.anchor}"${transform}>${escapeXml(item.text)}</text>`,
				)
				break
			}
			default: {
				const never: never = item
				throw new Error(`Unknown figure item ${String(never)}`)
			}
		}
	}
	parts.push('</svg>')
	return parts.join('\n')
}

/** Width of a figure text in points, as both renderers lay it out. */
export function figureTextWidth(item: FigureText): number {
	return measureText(item.text, item.size, face(item.bold))
}
