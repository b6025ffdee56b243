import { scaleLinear, type ScaleLinear } from 'd3-scale'
import { select } from 'd3-selection'
import { line } from 'd3-shape'
import { zoom, zoomIdentity, type D3ZoomEvent, type ZoomBehavior } from 'd3-zoom'
import { useEffect, useId, useMemo, useRef, useState } from 'react'
import { Button } from '#app/components/ui/button.tsx'
import { cn } from '#app/utils/misc.ts'
import { nearestIndex, thinForDisplay } from '#shared/spectra/thin.ts'
import { absorbanceToTransmittance } from '#shared/spectra/units.ts'

/** Colour tokens a series may use (all defined in app/app.css `@theme`). */
export type SeriesColorToken = 'series-1' | 'series-2' | 'series-3' | 'series-4' | 'accent' | 'ink'

/** One spectrum: x in cm⁻¹ (monotone, either order), y in decadic absorbance, same length. */
export type PlotSeries = {
	id: string
	label: string
	x: ReadonlyArray<number>
	y: ReadonlyArray<number>
	colorToken?: SeriesColorToken
}

/** A band of a band table: position and optional ± tolerance in cm⁻¹. */
export type BandMarker = { position: number; tolerance?: number; label: string }

/** A wavenumber interval left out of comparisons, shaded on the chart. */
export type ExclusionRegion = { from: number; to: number; label?: string }

export type PeakLabel = { position: number; label: string }

export type OrdinateMode = 'absorbance' | 'transmittance'

/** A wavenumber range in cm⁻¹ with `from < to`. */
export type WavenumberRange = { from: number; to: number }

export type SpectrumPlotProps = {
	series: ReadonlyArray<PlotSeries>
	bands?: ReadonlyArray<BandMarker>
	exclusionRegions?: ReadonlyArray<ExclusionRegion>
	peaks?: ReadonlyArray<PeakLabel>
	initialMode?: OrdinateMode
	/** Height of the drawing area in CSS pixels (toolbar, read-out and legend come on top). */
	height?: number
	/** Called when a zoom or pan gesture ends, with the visible range. */
	onRangeChange?: (range: WavenumberRange) => void
	className?: string
}

const DEFAULT_TOKENS: ReadonlyArray<SeriesColorToken> = ['series-1', 'series-2', 'series-3', 'series-4']

// NOTE: full class names, so that Tailwind finds them when it scans this file.
const STROKE: Record<SeriesColorToken, string> = {
	'series-1': 'stroke-series-1',
	'series-2': 'stroke-series-2',
	'series-3': 'stroke-series-3',
	'series-4': 'stroke-series-4',
	accent: 'stroke-accent',
	ink: 'stroke-ink',
}
const FILL: Record<SeriesColorToken, string> = {
	'series-1': 'fill-series-1',
	'series-2': 'fill-series-2',
	'series-3': 'fill-series-3',
	'series-4': 'fill-series-4',
	accent: 'fill-accent',
	ink: 'fill-ink',
}
const BACKGROUND: Record<SeriesColorToken, string> = {
	'series-1': 'bg-series-1',
	'series-2': 'bg-series-2',
	'series-3': 'bg-series-3',
	'series-4': 'bg-series-4',
	accent: 'bg-accent',
	ink: 'bg-ink',
}

/** Past four overlays the colours repeat, so the line style changes too. */
const DASHES: ReadonlyArray<string | undefined> = [undefined, '7 3', '2 2']

const MARGIN = { left: 64, right: 18, bottom: 44 }
const PLOT_TOP_GAP = 10
const LANE_HEIGHT = 15
const MAX_LANES = 3
/** Points drawn per pixel of plot width: two keep each pixel column's minimum and maximum. */
const POINTS_PER_PIXEL = 2
/** The narrowest range zoom reaches, in sampling steps of the densest series (and never under 1 cm⁻¹). */
const MIN_WINDOW_STEPS = 12
const ZOOM_STEP = 1.6
/** Average advance of an 12px Inter character, for laying out labels before they can be measured. */
const CHAR_WIDTH = 6.6
/** Rotated 11px peak labels closer than this (px) would overlap; the later one is left out. */
const PEAK_LABEL_GAP = 11
const PEAK_CHAR_WIDTH = 6.2

type Styled = PlotSeries & { token: SeriesColorToken; dash: string | undefined }

/**
 * An infrared spectrum chart: wavenumber running high to low, absorbance or transmittance, overlays with a legend,
 * zoom and pan (wheel, drag, buttons, keys), band markers, shaded exclusion regions, peak labels and a hover
 * read-out. The server renders a sized placeholder with a text summary; the chart is drawn once the page is live.
 * Each view is thinned to about two points per pixel of the visible range, so 50,000-point spectra stay smooth.
 */
export function SpectrumPlot({
	series,
	bands = [],
	exclusionRegions = [],
	peaks = [],
	initialMode = 'absorbance',
	height = 380,
	onRangeChange,
	className,
}: SpectrumPlotProps) {
	const [mode, setMode] = useState<OrdinateMode>(initialMode)
	const [hidden, setHidden] = useState<ReadonlySet<string>>(() => new Set())
	const [width, setWidth] = useState<number | null>(null)
	const [view, setView] = useState<WavenumberRange | null>(null)
	const [cursor, setCursor] = useState<number | null>(null)
	const containerRef = useRef<HTMLDivElement>(null)
	const overlayRef = useRef<SVGRectElement>(null)
	const zoomRef = useRef<ZoomBehavior<SVGRectElement, unknown> | null>(null)
	const viewRef = useRef<WavenumberRange | null>(null)
	const frameRef = useRef<number | null>(null)
	const onRangeChangeRef = useRef(onRangeChange)
	const baseId = useId().replace(/[^a-zA-Z0-9_-]/g, '')
	const ids = { clip: `${baseId}-clip`, hatch: `${baseId}-hatch`, help: `${baseId}-help`, summary: `${baseId}-summary` }

	useEffect(() => {
		onRangeChangeRef.current = onRangeChange
	}, [onRangeChange])

	const styled = useMemo<Array<Styled>>(
		() =>
			series.map((s, i) => ({
				...s,
				token: s.colorToken ?? DEFAULT_TOKENS[i % DEFAULT_TOKENS.length]!,
				dash: DASHES[Math.floor(i / DEFAULT_TOKENS.length) % DASHES.length],
			})),
		[series],
	)
	const measured = useMemo(() => fullRange(series), [series])
	// Keyed on the numbers, so a parent that rebuilds equal arrays on every render does not reset the zoom.
	const full = useMemo(
		() => (measured ? { from: measured.from, to: measured.to } : null),
		[measured?.from, measured?.to],
	)
	const minWindow = useMemo(() => narrowestWindow(series), [series])
	const visible = styled.filter((s) => !hidden.has(s.id))
	const summary = describe(series, bands, exclusionRegions, full)

	// Measure after hydration; the chart exists only from then on.
	useEffect(() => {
		const element = containerRef.current
		if (!element) return
		setWidth(Math.floor(element.getBoundingClientRect().width))
		const observer = new ResizeObserver((entries) => {
			const box = entries[0]?.contentRect
			if (box) setWidth(Math.floor(box.width))
		})
		observer.observe(element)
		return () => observer.disconnect()
	}, [])

	const lanes = useMemo(
		() => (width === null || !full ? 0 : laneCount(bands, scaleLinear([full.to, full.from], [0, plotWidthOf(width)]))),
		[bands, full, width],
	)
	const top = PLOT_TOP_GAP + lanes * LANE_HEIGHT
	const plotWidth = width === null ? 0 : plotWidthOf(width)
	const plotHeight = Math.max(40, height - top - MARGIN.bottom)
	// Memoised so that hover re-renders reuse the thinned data, scales and paths.
	const range = useMemo(() => clampRange(view ?? full, full), [view, full])

	// d3-zoom owns the gesture state; React only learns the resulting range (once per animation frame).
	useEffect(() => {
		const overlay = overlayRef.current
		if (!overlay || !full || plotWidth <= 0) return
		const base = scaleLinear([full.to, full.from], [0, plotWidth])
		const maxScale = Math.max(1, (full.to - full.from) / minWindow)
		const toRange = (event: D3ZoomEvent<SVGRectElement, unknown>): WavenumberRange => {
			const [high, low] = event.transform.rescaleX(base).domain() as [number, number]
			return { from: low, to: high }
		}
		// Re-applying the kept window below is not a gesture, so it is not reported.
		let restoring = false
		const behaviour = zoom<SVGRectElement, unknown>()
			.scaleExtent([1, maxScale])
			.extent([
				[0, 0],
				[plotWidth, plotHeight],
			])
			.translateExtent([
				[0, -Infinity],
				[plotWidth, Infinity],
			])
			.on('zoom', (event: D3ZoomEvent<SVGRectElement, unknown>) => {
				viewRef.current = toRange(event)
				if (frameRef.current !== null) return
				frameRef.current = requestAnimationFrame(() => {
					frameRef.current = null
					setView(viewRef.current)
				})
			})
			.on('end', (event: D3ZoomEvent<SVGRectElement, unknown>) => {
				if (!restoring) onRangeChangeRef.current?.(toRange(event))
			})
		const selection = select(overlay)
		selection.call(behaviour)
		// Keep the current range across a resize or new data.
		const kept = clampRange(viewRef.current, full) ?? full
		const k = (full.to - full.from) / (kept.to - kept.from)
		restoring = true
		selection.call(behaviour.transform, zoomIdentity.translate(-k * base(kept.to), 0).scale(k))
		restoring = false
		zoomRef.current = behaviour
		return () => {
			selection.on('.zoom', null)
			zoomRef.current = null
			if (frameRef.current !== null) cancelAnimationFrame(frameRef.current)
			frameRef.current = null
		}
	}, [full, minWindow, plotWidth, plotHeight])

	const x = useMemo(
		() => scaleLinear([range?.to ?? 1, range?.from ?? 0], [0, plotWidth]),
		[range?.from, range?.to, plotWidth],
	)

	// Thin every visible series to the range, then convert the ordinate (thinning commutes with T = 10^−A).
	const drawn = useMemo(() => {
		if (!range || plotWidth <= 0) return []
		return styled
			.filter((s) => !hidden.has(s.id))
			.map((s) => {
				const thinned = thinForDisplay(s.x, s.y, {
					maxPoints: Math.max(16, Math.round(plotWidth * POINTS_PER_PIXEL)),
					from: range.from,
					to: range.to,
				})
				return { series: s, x: thinned.x, y: mode === 'absorbance' ? thinned.y : thinned.y.map(toPercentT) }
			})
	}, [styled, hidden, mode, range?.from, range?.to, plotWidth])

	const y = useMemo(() => {
		let low = Infinity
		let high = -Infinity
		for (const d of drawn) {
			for (let i = 0; i < d.x.length; i++) {
				const xi = d.x[i]!
				const yi = d.y[i]!
				if (!range || xi < range.from || xi > range.to || !Number.isFinite(yi)) continue
				if (yi < low) low = yi
				if (yi > high) high = yi
			}
		}
		if (!(high >= low)) return scaleLinear([0, mode === 'absorbance' ? 1 : 100], [plotHeight, 0])
		const span = high - low || Math.max(Math.abs(high), 1) * 0.1
		// Room above absorbance maxima (or below transmittance minima) for the peak labels.
		const labelRoom = peaks.length > 0 ? 0.22 : 0.06
		let lower = low - span * (mode === 'transmittance' ? labelRoom : 0.04)
		const upper = high + span * (mode === 'absorbance' ? labelRoom : 0.04)
		// Never show a negative transmittance the data do not have; labels that no longer fit move beside the band.
		if (mode === 'transmittance' && low >= 0) lower = Math.max(0, lower)
		return scaleLinear([lower, upper], [plotHeight, 0])
	}, [drawn, range, mode, plotHeight, peaks.length])

	const paths = useMemo(() => {
		const path = line<number>()
		return drawn.map((d) => {
			const p = path
				.defined((i) => Number.isFinite(d.y[i]!))
				.x((i) => x(d.x[i]!))
				.y((i) => y(d.y[i]!))
			return { series: d.series, d: p(d.x.map((_, i) => i)) ?? '' }
		})
	}, [drawn, x, y])

	const reading = cursor === null || !range ? null : readAt(cursor, visible, mode)
	const hint =
		visible.length === 0
			? 'All spectra are hidden; choose one in the legend below.'
			: 'Point at the chart, or focus it and use the arrow keys, to read values.'

	function overlaySelection() {
		const overlay = overlayRef.current
		return overlay && zoomRef.current ? { selection: select(overlay), behaviour: zoomRef.current } : null
	}

	function zoomBy(factor: number) {
		const target = overlaySelection()
		if (!target) return
		const around = reading && range && reading.position >= range.from && reading.position <= range.to
		target.behaviour.scaleBy(target.selection, factor, around ? [x(reading.position), plotHeight / 2] : undefined)
	}

	function panBy(pixels: number) {
		const target = overlaySelection()
		if (!target || !full || !range) return
		const k = (full.to - full.from) / (range.to - range.from)
		target.behaviour.translateBy(target.selection, pixels / k, 0)
	}

	function resetView() {
		const target = overlaySelection()
		if (target) target.behaviour.transform(target.selection, zoomIdentity)
	}

	function onKeyDown(event: React.KeyboardEvent<SVGSVGElement>) {
		if (!range) return
		const span = range.to - range.from
		const key = event.key
		if (key === 'ArrowLeft' || key === 'ArrowRight') {
			// Left is towards higher wavenumbers, as drawn.
			const towardsHigh = key === 'ArrowLeft' ? 1 : -1
			if (event.shiftKey) panBy(towardsHigh * plotWidth * 0.1)
			else {
				const start = cursor !== null && cursor >= range.from && cursor <= range.to ? cursor : range.from + span / 2
				setCursor(Math.min(range.to, Math.max(range.from, start + towardsHigh * span * 0.01)))
			}
		} else if (key === '+' || key === '=') zoomBy(ZOOM_STEP)
		else if (key === '-' || key === '_') zoomBy(1 / ZOOM_STEP)
		else if (key === '0') resetView()
		else if (key === 'Escape') setCursor(null)
		else return
		event.preventDefault()
	}

	function onPointerMove(event: React.PointerEvent<SVGRectElement>) {
		const box = event.currentTarget.getBoundingClientRect()
		setCursor(x.invert(event.clientX - box.left))
	}

	function toggle(id: string) {
		setHidden((current) => {
			const next = new Set(current)
			if (next.has(id)) next.delete(id)
			else next.add(id)
			return next
		})
	}

	const ready = width !== null && full !== null && plotWidth > 0
	const zoomed = full !== null && range !== null && range.to - range.from < (full.to - full.from) * 0.999

	return (
		<figure className={cn('border-rule bg-sheet rounded-lg border p-4', className)} aria-describedby={ids.summary}>
			<div className="flex flex-wrap items-center justify-between gap-3">
				<div role="group" aria-label="Ordinate" className="border-rule-strong inline-flex rounded-md border p-0.5">
					{(['absorbance', 'transmittance'] as const).map((m) => (
						<button
							key={m}
							type="button"
							aria-pressed={mode === m}
							onClick={() => setMode(m)}
							className={cn(
								'h-7 rounded px-3 text-xs font-medium transition-colors',
								mode === m ? 'bg-accent text-paper' : 'text-ink-soft hover:bg-paper',
							)}
						>
							{m === 'absorbance' ? 'Absorbance' : 'Transmittance'}
						</button>
					))}
				</div>
				<div className="flex items-center gap-2">
					<Button variant="secondary" size="sm" disabled={!ready} onClick={() => zoomBy(ZOOM_STEP)}>
						Zoom in
					</Button>
					<Button variant="secondary" size="sm" disabled={!ready} onClick={() => zoomBy(1 / ZOOM_STEP)}>
						Zoom out
					</Button>
					<Button variant="secondary" size="sm" disabled={!ready || !zoomed} onClick={resetView}>
						Reset view
					</Button>
				</div>
			</div>

			{/* Room for the longest read-out is kept, so the chart does not move under the pointer. */}
			<div aria-live="polite" className={cn('text-ink mt-3 text-sm', styled.length > 2 ? 'min-h-10' : 'min-h-5')}>
				{!ready ? null : reading ? <Readout reading={reading} mode={mode} /> : <p className="text-ink-soft">{hint}</p>}
			</div>

			<div ref={containerRef} className="relative mt-1 w-full" style={{ height }}>
				{!ready || !range ? (
					<div className="border-rule-strong bg-paper text-ink-soft flex h-full items-center justify-center rounded-md border border-dashed px-6 text-center text-sm">
						{/* The same summary is the figure's caption for screen readers. */}
						<p aria-hidden="true">
							{full === null
								? 'No spectrum data to show.'
								: width === null
									? `${summary} The interactive chart appears once the page has loaded.`
									: summary}
						</p>
					</div>
				) : (
					<svg
						width={width}
						height={height}
						className="block select-none"
						tabIndex={0}
						role="group"
						aria-roledescription="interactive chart"
						aria-label={`Spectrum chart, ${formatWavenumber(range.to)} to ${formatWavenumber(range.from)} cm⁻¹, ${mode}`}
						aria-describedby={ids.help}
						onKeyDown={onKeyDown}
					>
						<defs>
							<clipPath id={ids.clip}>
								<rect width={plotWidth} height={plotHeight} />
							</clipPath>
							<pattern id={ids.hatch} width="7" height="7" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
								<rect width="7" height="7" className="fill-caution-soft" />
								<line x1="0" y1="0" x2="0" y2="7" className="stroke-caution" strokeWidth="1.2" strokeOpacity="0.35" />
							</pattern>
						</defs>

						<g transform={`translate(${MARGIN.left},${top})`}>
							<Grid x={x} y={y} plotWidth={plotWidth} plotHeight={plotHeight} />

							<g clipPath={`url(#${ids.clip})`}>
								{exclusionRegions.map((r, i) => (
									<ExclusionShade
										key={`${r.from}-${r.to}-${i}`}
										region={r}
										x={x}
										plotHeight={plotHeight}
										hatchId={ids.hatch}
									/>
								))}
								{bands.map((b, i) => (
									<BandShade key={`${b.position}-${i}`} band={b} x={x} plotHeight={plotHeight} />
								))}
								{paths.map(({ series: s, d }) => (
									<path
										key={s.id}
										d={d}
										className={cn('fill-none', STROKE[s.token])}
										strokeWidth={1.3}
										strokeLinejoin="round"
										strokeDasharray={s.dash}
									/>
								))}
								<PeakLabels peaks={peaks} series={visible} x={x} y={y} mode={mode} range={range} />
								{reading ? <Crosshair reading={reading} x={x} y={y} plotHeight={plotHeight} /> : null}
							</g>

							<BandLabels bands={bands} x={x} lanes={lanes} plotWidth={plotWidth} />
							<Axes x={x} y={y} plotWidth={plotWidth} plotHeight={plotHeight} mode={mode} />

							<rect
								ref={overlayRef}
								width={plotWidth}
								height={plotHeight}
								className="cursor-crosshair fill-transparent"
								pointerEvents="all"
								onPointerMove={onPointerMove}
								onPointerLeave={() => setCursor(null)}
							/>
						</g>
					</svg>
				)}
			</div>

			<div className="mt-3 flex flex-wrap items-center gap-x-5 gap-y-2 text-sm">
				<ul aria-label="Spectra (select to show or hide)" className="flex flex-wrap gap-2">
					{styled.map((s) => {
						const shown = !hidden.has(s.id)
						return (
							<li key={s.id}>
								<button
									type="button"
									aria-pressed={shown}
									onClick={() => toggle(s.id)}
									title={shown ? `Hide ${s.label}` : `Show ${s.label}`}
									className={cn(
										'border-rule hover:bg-paper inline-flex h-8 items-center gap-2 rounded-md border px-2.5',
										shown ? 'text-ink' : 'text-ink-faint line-through',
									)}
								>
									<LegendSwatch token={s.token} dash={s.dash} shown={shown} />
									{s.label}
								</button>
							</li>
						)
					})}
				</ul>
				{bands.length > 0 ? (
					<span className="text-ink-soft inline-flex items-center gap-2 text-xs">
						<span aria-hidden="true" className="border-accent bg-accent-soft h-3.5 w-3 border-x border-dashed" />
						Band ± tolerance
					</span>
				) : null}
				{exclusionRegions.length > 0 ? (
					<span className="text-ink-soft inline-flex items-center gap-2 text-xs">
						<span aria-hidden="true" className="border-caution/50 bg-caution-soft h-3.5 w-3.5 border" />
						Excluded: {exclusionRegions.map(formatRegion).join(', ')}
					</span>
				) : null}
			</div>

			<p id={ids.help} className="text-ink-faint mt-2 text-xs">
				Scroll to zoom, drag to pan. With the chart focused: ← → read values, Shift + ← → pan, + and − zoom, 0 resets.
			</p>
			<figcaption id={ids.summary} className="sr-only">
				{summary}
			</figcaption>
		</figure>
	)
}

function plotWidthOf(width: number) {
	return Math.max(0, width - MARGIN.left - MARGIN.right)
}

function toPercentT(absorbance: number) {
	return 100 * absorbanceToTransmittance(absorbance)
}

function fullRange(series: ReadonlyArray<PlotSeries>): WavenumberRange | null {
	let low = Infinity
	let high = -Infinity
	for (const s of series) {
		const n = s.x.length
		if (n === 0) continue
		low = Math.min(low, s.x[0]!, s.x[n - 1]!)
		high = Math.max(high, s.x[0]!, s.x[n - 1]!)
	}
	if (!Number.isFinite(low) || !Number.isFinite(high)) return null
	return high > low ? { from: low, to: high } : { from: low - 1, to: high + 1 }
}

function narrowestWindow(series: ReadonlyArray<PlotSeries>): number {
	let step = Infinity
	for (const s of series) {
		const n = s.x.length
		if (n > 1) step = Math.min(step, Math.abs(s.x[n - 1]! - s.x[0]!) / (n - 1))
	}
	return Math.max(1, Number.isFinite(step) ? step * MIN_WINDOW_STEPS : 1)
}

function clampRange(range: WavenumberRange | null, full: WavenumberRange | null): WavenumberRange | null {
	if (!range || !full) return full
	const from = Math.max(full.from, Math.min(range.from, range.to))
	const to = Math.min(full.to, Math.max(range.from, range.to))
	return to > from ? { from, to } : full
}

type Reading = {
	position: number
	values: Array<{ id: string; label: string; token: SeriesColorToken; x: number; value: number | null }>
}

/** Values of each visible series at the point nearest the cursor; the first series sets the wavenumber shown. */
function readAt(cursor: number, visible: ReadonlyArray<Styled>, mode: OrdinateMode): Reading | null {
	const first = visible.find((s) => s.x.length > 0)
	if (!first) return null
	const position = first.x[nearestIndex(first.x, cursor)]!
	const values = visible.map((s) => {
		const i = nearestIndex(s.x, position)
		const n = s.x.length
		const low = n ? Math.min(s.x[0]!, s.x[n - 1]!) : Infinity
		const high = n ? Math.max(s.x[0]!, s.x[n - 1]!) : -Infinity
		const inside = i >= 0 && position >= low && position <= high
		const a = inside ? s.y[i]! : Number.NaN
		const value = Number.isFinite(a) ? (mode === 'absorbance' ? a : toPercentT(a)) : null
		return { id: s.id, label: s.label, token: s.token, x: inside ? s.x[i]! : position, value }
	})
	return { position, values }
}

function formatWavenumber(value: number) {
	return value.toFixed(1)
}

function formatOrdinate(value: number, mode: OrdinateMode) {
	return mode === 'absorbance' ? `A = ${value.toFixed(3)}` : `T = ${value.toFixed(1)} %`
}

function formatRegion(region: ExclusionRegion) {
	const high = Math.round(Math.max(region.from, region.to))
	const low = Math.round(Math.min(region.from, region.to))
	return `${high}–${low} cm⁻¹${region.label ? ` (${region.label})` : ''}`
}

function plural(count: number, one: string, many: string) {
	return `${count} ${count === 1 ? one : many}`
}

/** The text a reader gets before the chart is drawn, and screen readers always. */
function describe(
	series: ReadonlyArray<PlotSeries>,
	bands: ReadonlyArray<BandMarker>,
	regions: ReadonlyArray<ExclusionRegion>,
	full: WavenumberRange | null,
): string {
	if (!full) return 'No spectrum data to show.'
	const parts = [
		`Infrared spectrum chart, ${Math.round(full.to)}–${Math.round(full.from)} cm⁻¹, ${plural(series.length, 'spectrum', 'spectra')}: ${series
			.map((s) => `${s.label} (${s.x.length} points)`)
			.join(', ')}.`,
	]
	if (bands.length > 0) {
		parts.push(
			`Band markers: ${bands
				.map((b) => `${b.label} at ${b.position}${b.tolerance ? ` ± ${b.tolerance}` : ''} cm⁻¹`)
				.join('; ')}.`,
		)
	}
	if (regions.length > 0) parts.push(`Excluded: ${regions.map(formatRegion).join(', ')}.`)
	return parts.join(' ')
}

type X = ScaleLinear<number, number>

function Grid({ x, y, plotWidth, plotHeight }: { x: X; y: X; plotWidth: number; plotHeight: number }) {
	return (
		<g aria-hidden="true">
			<rect width={plotWidth} height={plotHeight} className="fill-sheet" />
			{x.ticks(xTickCount(plotWidth)).map((t) => (
				<line key={`x${t}`} x1={x(t)} x2={x(t)} y2={plotHeight} className="stroke-rule" strokeWidth={0.6} />
			))}
			{y.ticks(5).map((t) => (
				<line key={`y${t}`} x2={plotWidth} y1={y(t)} y2={y(t)} className="stroke-rule" strokeWidth={0.6} />
			))}
		</g>
	)
}

function xTickCount(plotWidth: number) {
	return Math.max(2, Math.floor(plotWidth / 90))
}

function Axes({
	x,
	y,
	plotWidth,
	plotHeight,
	mode,
}: {
	x: X
	y: X
	plotWidth: number
	plotHeight: number
	mode: OrdinateMode
}) {
	const xTicks = x.ticks(xTickCount(plotWidth))
	const xFormat = x.tickFormat(xTickCount(plotWidth))
	const yTicks = y.ticks(5)
	const yFormat = y.tickFormat(5)
	return (
		<g aria-hidden="true" className="fill-ink-soft text-xs">
			<rect width={plotWidth} height={plotHeight} className="stroke-rule-strong fill-none" />
			<g transform={`translate(0,${plotHeight})`}>
				{xTicks.map((t) => (
					<g key={t} transform={`translate(${x(t)},0)`}>
						<line y2={5} className="stroke-ink-soft" />
						<text y={18} textAnchor="middle">
							{xFormat(t).replace(',', '')}
						</text>
					</g>
				))}
				<text x={plotWidth / 2} y={38} textAnchor="middle" className="fill-ink text-xs font-medium">
					Wavenumber (cm⁻¹)
				</text>
			</g>
			{yTicks.map((t) => (
				<g key={t} transform={`translate(0,${y(t)})`}>
					<line x2={-5} className="stroke-ink-soft" />
					<text x={-8} dy="0.32em" textAnchor="end">
						{yFormat(t)}
					</text>
				</g>
			))}
			<text
				transform={`translate(${-MARGIN.left + 14},${plotHeight / 2}) rotate(-90)`}
				textAnchor="middle"
				className="fill-ink text-xs font-medium"
			>
				{mode === 'absorbance' ? 'Absorbance' : 'Transmittance (%)'}
			</text>
		</g>
	)
}

function ExclusionShade({
	region,
	x,
	plotHeight,
	hatchId,
}: {
	region: ExclusionRegion
	x: X
	plotHeight: number
	hatchId: string
}) {
	const left = x(Math.max(region.from, region.to))
	const right = x(Math.min(region.from, region.to))
	const width = right - left
	const text = region.label ?? 'excluded'
	return (
		<g>
			<title>{`Excluded from comparison: ${formatRegion(region)}`}</title>
			<rect x={left} width={width} height={plotHeight} fill={`url(#${hatchId})`} />
			{width > text.length * CHAR_WIDTH + 8 ? (
				<text x={left + width / 2} y={plotHeight - 8} textAnchor="middle" className="fill-caution text-xs">
					{text}
				</text>
			) : null}
		</g>
	)
}

function BandShade({ band, x, plotHeight }: { band: BandMarker; x: X; plotHeight: number }) {
	const tolerance = band.tolerance ?? 0
	const px = x(band.position)
	return (
		<g>
			<title>{`${band.label}: ${band.position}${tolerance ? ` ± ${tolerance}` : ''} cm⁻¹`}</title>
			{tolerance > 0 ? (
				<rect
					x={x(band.position + tolerance)}
					width={Math.max(1, x(band.position - tolerance) - x(band.position + tolerance))}
					height={plotHeight}
					className="fill-accent-soft"
					opacity={0.85}
				/>
			) : null}
			<line x1={px} x2={px} y2={plotHeight} className="stroke-accent" strokeDasharray="4 3" strokeWidth={1} />
		</g>
	)
}

/** Greedy placement of band labels into lanes above the plot; a label that fits no lane is left out (see the title). */
function placeBandLabels(bands: ReadonlyArray<BandMarker>, x: X, lanes: number) {
	const [r0, r1] = x.range() as [number, number]
	const ends = Array.from({ length: lanes }, () => -Infinity)
	const placed: Array<{ band: BandMarker; px: number; lane: number }> = []
	const sorted = bands
		.map((band) => ({ band, px: x(band.position) }))
		.filter(({ px }) => px >= r0 && px <= r1)
		.sort((a, b) => a.px - b.px)
	for (const { band, px } of sorted) {
		const half = (band.label.length * CHAR_WIDTH) / 2 + 3
		const lane = ends.findIndex((end) => end <= px - half)
		if (lane < 0) continue
		ends[lane] = px + half
		placed.push({ band, px, lane })
	}
	return placed
}

function laneCount(bands: ReadonlyArray<BandMarker>, x: X) {
	if (bands.length === 0) return 0
	const placed = placeBandLabels(bands, x, MAX_LANES)
	return Math.max(1, ...placed.map((p) => p.lane + 1))
}

function BandLabels({
	bands,
	x,
	lanes,
	plotWidth,
}: {
	bands: ReadonlyArray<BandMarker>
	x: X
	lanes: number
	plotWidth: number
}) {
	if (lanes === 0) return null
	// Lane 0 sits on the plot; connectors are drawn first so that the haloed labels stay legible where they cross.
	const placed = placeBandLabels(bands, x, lanes).map((p) => {
		const half = (p.band.label.length * CHAR_WIDTH) / 2
		return {
			...p,
			labelY: -PLOT_TOP_GAP - p.lane * LANE_HEIGHT,
			anchorX: Math.min(plotWidth - half, Math.max(half, p.px)),
		}
	})
	return (
		<g aria-hidden="true" className="text-xs">
			{placed.map(({ band, px, labelY }) => (
				<line
					key={`line-${band.position}-${band.label}`}
					x1={px}
					x2={px}
					y1={labelY + 3}
					y2={0}
					className="stroke-accent"
					strokeWidth={0.8}
				/>
			))}
			{placed.map(({ band, labelY, anchorX }) => (
				<text
					key={`text-${band.position}-${band.label}`}
					x={anchorX}
					y={labelY}
					textAnchor="middle"
					className="fill-accent-strong stroke-sheet font-medium"
					strokeWidth={4}
					strokeLinejoin="round"
					paintOrder="stroke"
				>
					{band.label}
				</text>
			))}
		</g>
	)
}

function PeakLabels({
	peaks,
	series,
	x,
	y,
	mode,
	range,
}: {
	peaks: ReadonlyArray<PeakLabel>
	series: ReadonlyArray<Styled>
	x: X
	y: X
	mode: OrdinateMode
	range: WavenumberRange
}) {
	if (peaks.length === 0 || series.length === 0) return null
	const taken: Array<number> = []
	const labels: Array<React.ReactNode> = []
	for (const peak of peaks) {
		if (peak.position < range.from || peak.position > range.to) continue
		const px = x(peak.position)
		const [left, right] = x.range() as [number, number]
		// A rotated label this close to the frame would be cut in half by the clip.
		if (px < left + 6 || px > right - 6) continue
		if (taken.some((t) => Math.abs(t - px) < PEAK_LABEL_GAP)) continue
		// Sit above the highest absorbance (lowest transmittance) of the visible spectra at the peak.
		let extreme = mode === 'absorbance' ? -Infinity : Infinity
		for (const s of series) {
			const i = nearestIndex(s.x, peak.position)
			const a = s.y[i]
			if (i < 0 || a === undefined || !Number.isFinite(a)) continue
			const v = mode === 'absorbance' ? a : toPercentT(a)
			extreme = mode === 'absorbance' ? Math.max(extreme, v) : Math.min(extreme, v)
		}
		if (!Number.isFinite(extreme)) continue
		taken.push(px)
		const py = y(extreme)
		const up = mode === 'absorbance'
		const [bottom] = y.range() as [number, number]
		// Offset from the band tip to the label's near end, and the room left before the plot edge.
		const length = peak.label.length * PEAK_CHAR_WIDTH
		const room = (up ? py : bottom - py) - 2
		const offset = Math.min(12, room - length)
		const beside = offset < 8 ? 7 : 0
		labels.push(
			<g key={`${peak.position}-${peak.label}`} transform={`translate(${px + beside},${py})`}>
				{beside ? null : <line y1={up ? -3 : 3} y2={up ? -9 : 9} className="stroke-ink-soft" strokeWidth={0.8} />}
				<text
					transform="rotate(-90)"
					x={up ? offset : -offset}
					dy="0.32em"
					textAnchor={up ? 'start' : 'end'}
					className="fill-ink-soft stroke-sheet text-[11px] tabular-nums"
					strokeWidth={3}
					strokeLinejoin="round"
					paintOrder="stroke"
				>
					{peak.label}
				</text>
			</g>,
		)
	}
	return <g aria-hidden="true">{labels}</g>
}

function Readout({ reading, mode }: { reading: Reading; mode: OrdinateMode }) {
	return (
		<p className="flex flex-wrap gap-x-4 gap-y-0.5 tabular-nums">
			<span className="font-semibold">{formatWavenumber(reading.position)} cm⁻¹</span>
			{/* NOTE: the spaces between items are invisible in the flex layout but separate the words read aloud. */}
			{reading.values.map((v) => (
				<span key={v.id} className="inline-flex items-center gap-1.5">
					{' '}
					<span aria-hidden="true" className={cn('size-2 rounded-full', BACKGROUND[v.token])} />
					<span>
						{v.label}: {v.value === null ? 'no data here' : formatOrdinate(v.value, mode)}
						{v.value !== null && Math.abs(v.x - reading.position) > 0.05 ? (
							<span className="text-ink-faint"> (at {formatWavenumber(v.x)} cm⁻¹)</span>
						) : null}
						<span className="sr-only">;</span>
					</span>
				</span>
			))}
		</p>
	)
}

function Crosshair({ reading, x, y, plotHeight }: { reading: Reading; x: X; y: X; plotHeight: number }) {
	const px = x(reading.position)
	return (
		<g aria-hidden="true" pointerEvents="none">
			<line x1={px} x2={px} y2={plotHeight} className="stroke-ink" strokeWidth={0.8} strokeDasharray="2 2" />
			{reading.values.map((v) =>
				v.value === null ? null : (
					<circle
						key={v.id}
						cx={x(v.x)}
						cy={y(v.value)}
						r={3.5}
						className={cn('stroke-sheet', FILL[v.token])}
						strokeWidth={1.5}
					/>
				),
			)}
		</g>
	)
}

function LegendSwatch({ token, dash, shown }: { token: SeriesColorToken; dash: string | undefined; shown: boolean }) {
	if (!dash)
		return (
			<span aria-hidden="true" className={cn('h-0.5 w-5 rounded-full', BACKGROUND[token], !shown && 'opacity-30')} />
		)
	return (
		<svg aria-hidden="true" width="20" height="6" className={cn(!shown && 'opacity-30')}>
			<line x1="0" x2="20" y1="3" y2="3" className={STROKE[token]} strokeWidth="2" strokeDasharray={dash} />
		</svg>
	)
}
