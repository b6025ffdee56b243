/**
 * Trends of identity runs: every container's correlation with the reference, over time, against the acceptance
 * threshold of the specification version each run was judged by. Drift of a supplier or of an instrument shows as
 * a falling group of points long before a lot fails. Pure: the page's loader shapes the data here, the chart and
 * the tables only draw it.
 */
import { z } from 'zod'

/** One container of one run, as the trends page receives it (`recordedAt` an ISO 8601 UTC string). */
export const TrendPointSchema = z.object({
	runId: z.string(),
	runNumber: z.string(),
	recordedAt: z.iso.datetime(),
	lotNumber: z.string(),
	supplier: z.string(),
	instrumentCode: z.string(),
	containerNumber: z.number().int().positive(),
	verdict: z.enum(['conforms', 'does-not-conform', 'inconclusive']),
	/** Pearson correlation with the reference, in [-1, 1]; null when the engine could not compute one. */
	correlation: z.number().min(-1).max(1).nullable(),
	/** The specification version's minimum correlation: a container below it does not conform. */
	threshold: z.number(),
	documentNumber: z.string(),
	versionNumber: z.number().int().positive(),
})
export type TrendPoint = z.output<typeof TrendPointSchema>

/** True for a container that did not clearly conform (does not conform, or inconclusive). */
export function isOffTarget(point: Pick<TrendPoint, 'verdict'>): boolean {
	return point.verdict !== 'conforms'
}

/** True when the correlation is under the threshold (the comparison's own rule: correlation < minimum fails). */
export function isBelowThreshold(point: Pick<TrendPoint, 'correlation' | 'threshold'>): boolean {
	return point.correlation !== null && point.correlation < point.threshold
}

export type TrendGroup = {
	/** The supplier's name or the instrument's code. */
	key: string
	runs: number
	containers: number
	/** Containers with a correlation (the others are counted in `containers` only). */
	measured: number
	/** Arithmetic mean of the measured correlations; null when none was measured. */
	mean: number | null
	lowest: number | null
	belowThreshold: number
	/** belowThreshold / measured, in [0, 1]; null when none was measured. */
	shareBelow: number | null
	offTarget: number
}

/** Code-unit order: the same on the server and in every browser, unlike locale collation. */
const byText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0)

/**
 * Summary of the points per supplier or per instrument, ordered by key. Every point counts in exactly one group;
 * a point without a correlation counts as a container but not in the mean, the lowest value or the share below.
 */
export function summariseTrend(
	points: ReadonlyArray<TrendPoint>,
	by: 'supplier' | 'instrumentCode',
): Array<TrendGroup> {
	const groups = new Map<string, Array<TrendPoint>>()
	for (const point of points) {
		const members = groups.get(point[by])
		if (members) members.push(point)
		else groups.set(point[by], [point])
	}
	return [...groups.entries()]
		.sort((a, b) => byText(a[0], b[0]))
		.map(([key, members]) => {
			const measured = members.filter((point) => point.correlation !== null)
			const values = measured.map((point) => point.correlation!)
			const belowThreshold = measured.filter(isBelowThreshold).length
			return {
				key,
				runs: new Set(members.map((point) => point.runId)).size,
				containers: members.length,
				measured: measured.length,
				mean: values.length ? values.reduce((sum, value) => sum + value, 0) / values.length : null,
				lowest: values.length ? Math.min(...values) : null,
				belowThreshold,
				shareBelow: values.length ? belowThreshold / values.length : null,
				offTarget: members.filter(isOffTarget).length,
			}
		})
}

export type ThresholdStep = { from: string; threshold: number; versionNumber: number }
export type ThresholdLine = { documentNumber: string; steps: Array<ThresholdStep> }

/**
 * The acceptance threshold over time, one step line per specification: a new step starts at the first run judged
 * by a version whose threshold differs from the one before (a new version with the same threshold is no step).
 * Each step holds from its run until the next step. Specifications are ordered by document number.
 */
export function thresholdLines(points: ReadonlyArray<TrendPoint>): Array<ThresholdLine> {
	const ordered = [...points].sort((a, b) => byText(a.recordedAt, b.recordedAt))
	const lines = new Map<string, Array<ThresholdStep>>()
	for (const point of ordered) {
		const steps = lines.get(point.documentNumber) ?? []
		const last = steps.at(-1)
		if (!last || last.threshold !== point.threshold) {
			steps.push({ from: point.recordedAt, threshold: point.threshold, versionNumber: point.versionNumber })
		}
		lines.set(point.documentNumber, steps)
	}
	return [...lines.entries()]
		.sort((a, b) => byText(a[0], b[0]))
		.map(([documentNumber, steps]) => ({ documentNumber, steps }))
}

/**
 * How far below the lowest threshold a chart's scale reaches, in multiples of the threshold's distance from 1
 * (0.95 → down to 0.80). Wide enough to show a drift towards the threshold; one wrong material (a correlation of
 * 0.2, say) would otherwise squash every other point against 1.0.
 */
export const FOCUS_DEPTH = 3

export type CorrelationFocus = {
	/** Lowest and highest value the scale must show (correlations on the scale, and every threshold). */
	low: number
	high: number
	/** Correlations under this value lie off the scale (drawn apart, values in the table); null when none do. */
	offScaleBelow: number | null
}

/** The correlation range a trend chart shows; null without any correlation or threshold to show. */
export function correlationFocus(points: ReadonlyArray<TrendPoint>): CorrelationFocus | null {
	if (points.length === 0) return null
	const thresholds = points.map((point) => point.threshold)
	const lowestThreshold = Math.min(...thresholds)
	const cut = lowestThreshold - FOCUS_DEPTH * Math.max(1 - lowestThreshold, 0.01)
	const values = points.flatMap((point) => (point.correlation === null ? [] : [point.correlation]))
	const onScale = values.filter((value) => value >= cut)
	return {
		low: Math.min(lowestThreshold, ...onScale),
		high: Math.max(...thresholds, ...onScale),
		offScaleBelow: onScale.length < values.length ? cut : null,
	}
}

const day = (iso: string) => iso.slice(0, 10)

/** One paragraph that says what the chart shows, for its accessible description and for readers without it. */
export function describeTrend(points: ReadonlyArray<TrendPoint>): string {
	if (points.length === 0) return 'No identity run of this material has been recorded yet.'
	const runs = new Set(points.map((point) => point.runId)).size
	const times = points.map((point) => point.recordedAt).sort(byText)
	const first = day(times[0]!)
	const last = day(times.at(-1)!)
	const span = first === last ? `on ${first}` : `from ${first} to ${last}`
	const measured = points.filter((point) => point.correlation !== null)
	const below = measured.filter(isBelowThreshold).length
	const offTarget = points.filter(isOffTarget).length
	const parts = [
		`${plural(points.length, 'container')} in ${plural(runs, 'run')} ${span}.`,
		below === 0
			? 'None is below the acceptance threshold.'
			: `${plural(below, 'container')} below the acceptance threshold.`,
	]
	if (offTarget > below) parts.push(`${plural(offTarget, 'container')} did not clearly conform.`)
	const lowest = measured.reduce<TrendPoint | null>(
		(low, point) => (!low || point.correlation! < low.correlation! ? point : low),
		null,
	)
	if (lowest) {
		parts.push(
			`Lowest correlation ${lowest.correlation!.toFixed(4)}: run ${lowest.runNumber}, lot ${lowest.lotNumber}, container ${lowest.containerNumber}, ${lowest.instrumentCode}.`,
		)
	}
	if (measured.length < points.length) {
		parts.push(`${plural(points.length - measured.length, 'container')} without a correlation (listed in the table).`)
	}
	return parts.join(' ')
}

function plural(count: number, noun: string) {
	return `${count} ${noun}${count === 1 ? '' : 's'}`
}
