import { scaleLinear, scaleUtc } from 'd3-scale'
import {
	area,
	curveStepAfter,
	line,
	symbol,
	symbolCircle,
	symbolCross,
	symbolDiamond,
	symbolSquare,
	symbolStar,
	symbolTriangle,
	symbolWye,
	type SymbolType,
} from 'd3-shape'
import { useEffect, useId, useMemo, useState } from 'react'
import { cn } from '#app/utils/misc.ts'
import { type CorrelationFocus, isOffTarget, type ThresholdLine, type TrendPoint } from '#shared/runs/trends.ts'

// The chart is drawn in a fixed coordinate system and scaled by the browser (viewBox), so the server renders the
// finished picture: it needs no measuring, works without JavaScript, and prints.
const VIEW = { width: 960, height: 400 }
const MARGIN = { top: 18, right: 24, bottom: 46, left: 62 }
const PLOT = { width: VIEW.width - MARGIN.left - MARGIN.right, height: VIEW.height - MARGIN.top - MARGIN.bottom }
/** Area of a point's symbol in square viewBox units (d3-shape's size). */
const SYMBOL_SIZE = 64
/** Containers of one run fan out sideways by at most this many units, so that equal values stay countable. */
const FAN = 14
/** Height of the strip under the plot where correlations below the scale are drawn, with their values. */
const OFF_SCALE_LANE = 30

// NOTE: full class names, so that Tailwind finds them when it scans this file (tokens in app/app.css).
const SUPPLIER_FILL = ['fill-series-1', 'fill-series-2', 'fill-series-3', 'fill-series-4'] as const
const SUPPLIER_STROKE = ['stroke-series-1', 'stroke-series-2', 'stroke-series-3', 'stroke-series-4'] as const
const SUPPLIER_BG = ['bg-series-1', 'bg-series-2', 'bg-series-3', 'bg-series-4'] as const
const SUPPLIER_BORDER = ['border-series-1', 'border-series-2', 'border-series-3', 'border-series-4'] as const
/** Shapes in order of use: the most distinct first. */
const SHAPES: ReadonlyArray<SymbolType> = [
	symbolCircle,
	symbolSquare,
	symbolTriangle,
	symbolDiamond,
	symbolCross,
	symbolWye,
	symbolStar,
]

export type TrendChartProps = {
	points: ReadonlyArray<TrendPoint>
	thresholds: ReadonlyArray<ThresholdLine>
	/** The correlation range to show (shared/runs/trends.ts correlationFocus). */
	focus: CorrelationFocus
	/** Supplier names in legend order; the index picks the colour (filled for the first four, hollow after). */
	suppliers: ReadonlyArray<string>
	/** Instrument codes in legend order; the index picks the shape. */
	instruments: ReadonlyArray<string>
	title: string
	description: string
}

type Placed = { point: TrendPoint; key: string; cx: number; cy: number; offScale: boolean }

/**
 * Correlation of every container over time against the acceptance threshold (a step line per specification):
 * colour by supplier, shape by instrument, a ring around every container that did not clearly conform. A plain
 * table beside it carries the exact numbers; each point names itself on hover.
 */
export function TrendChart({ points, thresholds, focus, suppliers, instruments, title, description }: TrendChartProps) {
	const ids = useId().replace(/[^a-zA-Z0-9_-]/g, '')
	const titleId = `${ids}-title`
	const descId = `${ids}-desc`
	const [hydrated, setHydrated] = useState(false)
	const [active, setActive] = useState<Placed | null>(null)
	// Before hydration every point carries an SVG <title> (the browser's own tooltip); afterwards a styled one.
	useEffect(() => setHydrated(true), [])

	const measured = useMemo(() => points.filter((point) => point.correlation !== null), [points])
	const { x, y } = useMemo(() => scales(points, focus), [points, focus])
	const placed = useMemo(() => place(measured, x, y, focus.offScaleBelow), [measured, x, y, focus.offScaleBelow])

	const offScaleLabels = labelOffScale(placed)
	const supplierIndex = new Map(suppliers.map((name, i) => [name, i]))
	const instrumentIndex = new Map(instruments.map((code, i) => [code, i]))
	const [xEnd] = x.range().slice(-1) as [number]
	const yTicks = y.ticks(6)
	const yFormat = y.tickFormat(6)
	const xTicks = x.ticks(6)
	const xFormat = x.tickFormat(6)

	// Each step holds until the next one, and the last one to the right edge.
	const steps = thresholds.map((threshold) => {
		const corners: Array<[number, number]> = threshold.steps.map((step) => [x(new Date(step.from)), y(step.threshold)])
		const last = corners.at(-1)
		const outline: Array<[number, number]> = last ? [...corners, [xEnd, last[1]]] : []
		return { threshold, corners, outline, path: line().curve(curveStepAfter)(outline) ?? '' }
	})
	// The zone below the threshold is shaded only when one specification applies (two would overlap confusingly).
	const belowZone = steps.length === 1 ? (area().curve(curveStepAfter).y0(PLOT.height)(steps[0]!.outline) ?? '') : ''

	return (
		<figure className="border-rule bg-sheet rounded-lg border p-4" data-testid="trend-chart">
			<div className="relative">
				<svg
					viewBox={`0 0 ${VIEW.width} ${VIEW.height}`}
					className="block h-auto w-full select-none"
					role="img"
					aria-labelledby={titleId}
					aria-describedby={descId}
				>
					<title id={titleId}>{title}</title>
					<desc id={descId}>{description}</desc>
					<g transform={`translate(${MARGIN.left},${MARGIN.top})`}>
						<rect width={PLOT.width} height={PLOT.height} className="fill-sheet" />
						{belowZone ? <path d={belowZone} className="fill-danger-soft" opacity={0.6} /> : null}
						{focus.offScaleBelow === null ? null : (
							<g>
								<rect
									y={PLOT.height - OFF_SCALE_LANE}
									width={PLOT.width}
									height={OFF_SCALE_LANE}
									className="fill-paper"
								/>
								<line
									x2={PLOT.width}
									y1={PLOT.height - OFF_SCALE_LANE}
									y2={PLOT.height - OFF_SCALE_LANE}
									className="stroke-ink-faint"
									strokeDasharray="3 3"
								/>
							</g>
						)}
						{yTicks.map((tick) => (
							<line
								key={`gy${tick}`}
								x2={PLOT.width}
								y1={y(tick)}
								y2={y(tick)}
								className="stroke-rule"
								strokeWidth={0.8}
							/>
						))}
						{xTicks.map((tick) => (
							<line
								key={`gx${tick.getTime()}`}
								x1={x(tick)}
								x2={x(tick)}
								y2={PLOT.height}
								className="stroke-rule"
								strokeWidth={0.8}
							/>
						))}
						{steps.map(({ threshold, path }) => (
							<path
								key={threshold.documentNumber}
								d={path}
								className="stroke-danger fill-none"
								strokeWidth={1.6}
								strokeDasharray="7 4"
							/>
						))}
						{steps.map(({ threshold, corners }) =>
							threshold.steps.map((step, i) => {
								const [sx, sy] = corners[i]!
								const next = corners[i + 1]?.[0] ?? xEnd
								// A label only where its step is long enough to hold it; under the line, where points are rare.
								if (next - sx < 240) return null
								return (
									<text
										key={`${threshold.documentNumber}-${step.from}`}
										x={Math.max(sx, 0) + 10}
										y={sy + 17}
										className="fill-danger stroke-sheet text-[13px] font-medium"
										strokeWidth={4}
										strokeLinejoin="round"
										paintOrder="stroke"
									>
										{`${threshold.documentNumber} v${step.versionNumber}: minimum ${step.threshold}`}
									</text>
								)
							}),
						)}
						{placed.map((item) => {
							const { point } = item
							const colour = (supplierIndex.get(point.supplier) ?? 0) % SUPPLIER_FILL.length
							const hollow = (supplierIndex.get(point.supplier) ?? 0) >= SUPPLIER_FILL.length
							const shape = SHAPES[(instrumentIndex.get(point.instrumentCode) ?? 0) % SHAPES.length]!
							const off = isOffTarget(point)
							return (
								<g
									key={item.key}
									transform={`translate(${item.cx},${item.cy})`}
									onPointerEnter={() => setActive(item)}
									onPointerLeave={() => setActive((current) => (current?.key === item.key ? null : current))}
									data-testid="trend-point"
									data-off-target={off ? 'true' : undefined}
								>
									{hydrated ? null : <title>{pointLabel(point)}</title>}
									{off ? <circle r={10} className="stroke-danger fill-none" strokeWidth={2.2} /> : null}
									{offScaleLabels.get(item.key) ? (
										<text
											x={14}
											dy="0.32em"
											className="fill-danger stroke-paper text-[12px] font-semibold tabular-nums"
											strokeWidth={3}
											paintOrder="stroke"
										>
											{offScaleLabels.get(item.key)}
										</text>
									) : null}
									<path
										d={symbol(shape, SYMBOL_SIZE)() ?? ''}
										className={cn(
											SUPPLIER_STROKE[colour],
											hollow ? 'fill-sheet' : SUPPLIER_FILL[colour],
											active?.key === item.key && 'stroke-ink',
										)}
										strokeWidth={hollow ? 2 : 1}
										fillOpacity={hollow ? 1 : 0.85}
									/>
								</g>
							)
						})}
						<rect width={PLOT.width} height={PLOT.height} className="stroke-rule-strong fill-none" />
						<g className="fill-ink-soft text-[13px]">
							{yTicks.map((tick) => (
								<g key={`ty${tick}`} transform={`translate(0,${y(tick)})`}>
									<line x2={-5} className="stroke-ink-soft" />
									<text x={-9} dy="0.32em" textAnchor="end">
										{yFormat(tick)}
									</text>
								</g>
							))}
							{focus.offScaleBelow === null ? null : (
								<text x={-9} y={PLOT.height - OFF_SCALE_LANE / 2} dy="0.32em" textAnchor="end">
									{`< ${focus.offScaleBelow.toFixed(2)}`}
								</text>
							)}
							{xTicks.map((tick) => (
								<g key={`tx${tick.getTime()}`} transform={`translate(${x(tick)},${PLOT.height})`}>
									<line y2={5} className="stroke-ink-soft" />
									<text y={20} textAnchor="middle">
										{xFormat(tick)}
									</text>
								</g>
							))}
						</g>
						<text
							x={PLOT.width / 2}
							y={PLOT.height + 40}
							textAnchor="middle"
							className="fill-ink text-[13px] font-medium"
						>
							Run recorded (UTC)
						</text>
						<text
							transform={`translate(${-MARGIN.left + 16},${PLOT.height / 2}) rotate(-90)`}
							textAnchor="middle"
							className="fill-ink text-[13px] font-medium"
						>
							Correlation with the reference
						</text>
					</g>
				</svg>
				{active ? <Tooltip item={active} /> : null}
			</div>
			<Legend suppliers={suppliers} instruments={instruments} />
			{measured.length < points.length ? (
				<p className="text-ink-soft mt-2 text-xs">
					{points.length - measured.length === 1
						? '1 container has no correlation and cannot be drawn; the table lists it.'
						: `${points.length - measured.length} containers have no correlation and cannot be drawn; the table lists them.`}
				</p>
			) : null}
			<figcaption className="sr-only">{description}</figcaption>
		</figure>
	)
}

/** The words of one point: for its title, its tooltip and tests. */
export function pointLabel(point: TrendPoint): string {
	const verdict =
		point.verdict === 'conforms'
			? 'conforms'
			: point.verdict === 'does-not-conform'
				? 'does not conform'
				: 'inconclusive'
	return `Run ${point.runNumber}, lot ${point.lotNumber} (${point.supplier}), container ${point.containerNumber}: correlation ${point.correlation === null ? 'none' : point.correlation.toFixed(4)}, minimum ${point.threshold}, ${verdict}; instrument ${point.instrumentCode}`
}

function scales(points: ReadonlyArray<TrendPoint>, focus: CorrelationFocus) {
	const times = points.map((point) => new Date(point.recordedAt).getTime())
	const first = Math.min(...times)
	const last = Math.max(...times)
	// A single day of runs still gets a readable axis: half a day either side; otherwise 4 % of the span.
	const pad = last - first < 86_400_000 ? 43_200_000 : (last - first) * 0.04
	const x = scaleUtc([new Date(first - pad), new Date(last + pad)], [0, PLOT.width])
	const room = Math.max(0.004, (focus.high - focus.low) * 0.08)
	const bottom = PLOT.height - (focus.offScaleBelow === null ? 0 : OFF_SCALE_LANE)
	const y = scaleLinear([Math.max(-1, focus.low - room), Math.min(1 + room / 3, focus.high + room / 3)], [bottom, 0])
	return { x, y }
}

/**
 * Positions, with the containers of one run fanned out around the run's time in container order; a correlation
 * below the scale sits in the strip under the plot.
 */
function place(
	points: ReadonlyArray<TrendPoint>,
	x: (date: Date) => number,
	y: (value: number) => number,
	offScaleBelow: number | null,
): Array<Placed> {
	// Each point's place among its run's containers, counted in one pass.
	const perRun = new Map<string, number>()
	const indexInRun = points.map((point) => {
		const seen = perRun.get(point.runId) ?? 0
		perRun.set(point.runId, seen + 1)
		return seen
	})
	return points.map((point, at) => {
		const runSize = perRun.get(point.runId)!
		const index = indexInRun[at]!
		const step = runSize > 1 ? Math.min(4, (2 * FAN) / (runSize - 1)) : 0
		const offset = (index - (runSize - 1) / 2) * step
		const offScale = offScaleBelow !== null && point.correlation! < offScaleBelow
		return {
			point,
			key: `${point.runId}-${point.containerNumber}`,
			cx: x(new Date(point.recordedAt)) + offset,
			cy: offScale ? PLOT.height - OFF_SCALE_LANE / 2 : y(point.correlation!),
			offScale,
		}
	})
}

/** One value label per run in the off-scale strip, on its first point: the value, or how many and the lowest. */
function labelOffScale(placed: ReadonlyArray<Placed>): Map<string, string> {
	const perRun = new Map<string, Array<Placed>>()
	for (const item of placed) {
		if (!item.offScale) continue
		const items = perRun.get(item.point.runId)
		if (items) items.push(item)
		else perRun.set(item.point.runId, [item])
	}
	const labels = new Map<string, string>()
	for (const items of perRun.values()) {
		const lowest = Math.min(...items.map((item) => item.point.correlation!)).toFixed(4)
		labels.set(items.at(-1)!.key, items.length === 1 ? lowest : `${items.length}, lowest ${lowest}`)
	}
	return labels
}

function Tooltip({ item }: { item: Placed }) {
	const { point } = item
	const left = ((item.cx + MARGIN.left) / VIEW.width) * 100
	const top = ((item.cy + MARGIN.top) / VIEW.height) * 100
	// Beside the point, on the side with room, and above it in the lower half of the chart.
	const flip = left > 65
	const above = top > 50
	return (
		<div
			role="tooltip"
			className={cn(
				'border-rule-strong bg-sheet text-ink pointer-events-none absolute z-10 w-72 rounded-md border px-3 py-2 text-xs shadow-md',
				flip && '-translate-x-full',
				above && '-translate-y-full',
			)}
			style={{
				left: `calc(${left}% ${flip ? '- 16px' : '+ 16px'})`,
				top: `calc(${top}% ${above ? '+ 12px' : '- 12px'})`,
			}}
		>
			<p className="font-semibold">
				{point.runNumber} · container {point.containerNumber}
			</p>
			<dl className="mt-1 grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 tabular-nums">
				<dt className="text-ink-soft">Correlation</dt>
				<dd className={cn(isOffTarget(point) && 'text-danger font-semibold')}>
					{point.correlation?.toFixed(4) ?? '—'}
				</dd>
				<dt className="text-ink-soft">Minimum</dt>
				<dd>
					{point.threshold} ({point.documentNumber} v{point.versionNumber})
				</dd>
				<dt className="text-ink-soft">Lot</dt>
				<dd>
					{point.lotNumber} · {point.supplier}
				</dd>
				<dt className="text-ink-soft">Instrument</dt>
				<dd>{point.instrumentCode}</dd>
				<dt className="text-ink-soft">Recorded</dt>
				<dd>{point.recordedAt.slice(0, 16).replace('T', ' ')} UTC</dd>
			</dl>
			{isOffTarget(point) ? (
				<p className="text-danger mt-1 font-semibold">
					{point.verdict === 'inconclusive' ? 'Inconclusive' : 'Does not conform'}
				</p>
			) : null}
		</div>
	)
}

function Legend({ suppliers, instruments }: { suppliers: ReadonlyArray<string>; instruments: ReadonlyArray<string> }) {
	return (
		<div className="mt-3 flex flex-wrap gap-x-8 gap-y-3 text-sm">
			<div>
				<p className="text-ink-faint mb-1 text-xs font-semibold tracking-wider uppercase">Supplier (colour)</p>
				<ul aria-label="Suppliers" className="flex flex-wrap gap-x-4 gap-y-1">
					{suppliers.map((name, i) => {
						const colour = i % SUPPLIER_BG.length
						const hollow = i >= SUPPLIER_BG.length
						return (
							<li key={name} className="inline-flex items-center gap-1.5">
								<span
									aria-hidden="true"
									className={cn(
										'size-3 rounded-full border-2',
										SUPPLIER_BORDER[colour],
										hollow ? 'bg-sheet' : SUPPLIER_BG[colour],
									)}
								/>
								{name}
							</li>
						)
					})}
				</ul>
			</div>
			<div>
				<p className="text-ink-faint mb-1 text-xs font-semibold tracking-wider uppercase">Instrument (shape)</p>
				<ul aria-label="Instruments" className="flex flex-wrap gap-x-4 gap-y-1">
					{instruments.map((code, i) => (
						<li key={code} className="inline-flex items-center gap-1.5">
							<svg aria-hidden="true" width="14" height="14" viewBox="-7 -7 14 14">
								<path d={symbol(SHAPES[i % SHAPES.length]!, 56)() ?? ''} className="fill-ink-soft" />
							</svg>
							{code}
						</li>
					))}
				</ul>
			</div>
			<div>
				<p className="text-ink-faint mb-1 text-xs font-semibold tracking-wider uppercase">Marks</p>
				<ul aria-label="Marks" className="flex flex-wrap gap-x-4 gap-y-1">
					<li className="inline-flex items-center gap-1.5">
						<svg aria-hidden="true" width="24" height="10">
							<line x1="0" x2="24" y1="5" y2="5" className="stroke-danger" strokeWidth="2" strokeDasharray="6 3" />
						</svg>
						Acceptance threshold (minimum correlation)
					</li>
					<li className="inline-flex items-center gap-1.5">
						<svg aria-hidden="true" width="16" height="16" viewBox="-8 -8 16 16">
							<circle r="6.5" className="stroke-danger fill-none" strokeWidth="2" />
						</svg>
						Did not conform, or inconclusive
					</li>
				</ul>
			</div>
		</div>
	)
}
