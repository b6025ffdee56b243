import fc from 'fast-check'
import { describe, expect, test } from 'vitest'

import {
	correlationFocus,
	describeTrend,
	isBelowThreshold,
	isOffTarget,
	summariseTrend,
	thresholdLines,
	type TrendPoint,
	TrendPointSchema,
} from '#shared/runs/trends.ts'

// Sources:
// - a container fails when its correlation is below the specification's minimum, equal passes (the engine's rule in
//   shared/spectra/compare.ts; a minimum is inclusive: common practice, no source);
// - trending identity results per supplier and per instrument to see drift before a lot fails: common practice,
//   no source;
// - the means and shares below are worked out by hand in the comments beside them.
const PRACTICE = 'common practice, no source'

let sequence = 0
function point(overrides: Partial<TrendPoint> = {}): TrendPoint {
	sequence += 1
	return {
		runId: 'run-1',
		runNumber: 'IDR-2026-0001',
		recordedAt: '2026-01-05T09:00:00.000Z',
		lotNumber: 'L1',
		supplier: 'Northbridge',
		instrumentCode: 'IR-01',
		containerNumber: sequence,
		verdict: 'conforms',
		correlation: 0.99,
		threshold: 0.95,
		documentNumber: 'SPEC-0001',
		versionNumber: 1,
		...overrides,
	}
}

describe(`a container against its threshold — ${PRACTICE}`, () => {
	test('equal to the minimum is not below it; a hair under is', () => {
		expect(isBelowThreshold({ correlation: 0.95, threshold: 0.95 })).toBe(false)
		expect(isBelowThreshold({ correlation: 0.9499999, threshold: 0.95 })).toBe(true)
		expect(isBelowThreshold({ correlation: null, threshold: 0.95 })).toBe(false)
	})

	test('anything but a clear "conforms" is off target, inconclusive included', () => {
		expect(isOffTarget({ verdict: 'conforms' })).toBe(false)
		expect(isOffTarget({ verdict: 'does-not-conform' })).toBe(true)
		expect(isOffTarget({ verdict: 'inconclusive' })).toBe(true)
	})
})

describe(`summaries per supplier and per instrument — ${PRACTICE}`, () => {
	const points = [
		point({ runId: 'r1', supplier: 'Northbridge', instrumentCode: 'IR-01', correlation: 0.99 }),
		point({ runId: 'r1', supplier: 'Northbridge', instrumentCode: 'IR-01', correlation: 0.97 }),
		point({
			runId: 'r2',
			supplier: 'Northbridge',
			instrumentCode: 'IR-02',
			correlation: 0.93,
			verdict: 'does-not-conform',
		}),
		point({ runId: 'r3', supplier: 'Alder & Sons', instrumentCode: 'IR-02', correlation: 0.98 }),
		point({
			runId: 'r3',
			supplier: 'Alder & Sons',
			instrumentCode: 'IR-02',
			correlation: null,
			verdict: 'inconclusive',
		}),
	]

	test('per supplier: runs, containers, mean, lowest, share below and off-target, ordered by name', () => {
		const groups = summariseTrend(points, 'supplier')
		expect(groups.map((group) => group.key)).toEqual(['Alder & Sons', 'Northbridge'])
		const [alder, north] = groups
		// Alder: one measured container (0.98); the inconclusive one has no correlation.
		expect(alder).toEqual({
			key: 'Alder & Sons',
			runs: 1,
			containers: 2,
			measured: 1,
			mean: 0.98,
			lowest: 0.98,
			belowThreshold: 0,
			shareBelow: 0,
			offTarget: 1,
		})
		// Northbridge: (0.99 + 0.97 + 0.93) / 3 = 2.89 / 3 = 0.963333…; one of three below 0.95.
		expect(north).toMatchObject({ runs: 2, containers: 3, measured: 3, lowest: 0.93, belowThreshold: 1, offTarget: 1 })
		expect(north!.mean).toBeCloseTo(0.963333, 6)
		expect(north!.shareBelow).toBeCloseTo(1 / 3, 12)
	})

	test('per instrument: the same points grouped by instrument code', () => {
		const groups = summariseTrend(points, 'instrumentCode')
		expect(groups.map((group) => [group.key, group.containers, group.runs, group.belowThreshold])).toEqual([
			['IR-01', 2, 1, 0],
			['IR-02', 3, 2, 1],
		])
		// IR-02 measured 0.93 and 0.98: mean 0.955.
		expect(groups[1]!.mean).toBeCloseTo(0.955, 12)
	})

	test('a group with no correlation at all has no mean, lowest or share', () => {
		const [only] = summariseTrend([point({ correlation: null, verdict: 'inconclusive' })], 'supplier')
		expect(only).toMatchObject({ measured: 0, mean: null, lowest: null, shareBelow: null, offTarget: 1 })
	})

	test('property: every point counts once; lowest ≤ mean; the share is in [0, 1]', () => {
		const arbitraryPoint = fc.record({
			runId: fc.constantFrom('r1', 'r2', 'r3', 'r4'),
			supplier: fc.constantFrom('A', 'B', 'C'),
			instrumentCode: fc.constantFrom('IR-01', 'IR-02'),
			correlation: fc.option(fc.double({ min: -1, max: 1, noNaN: true })),
			threshold: fc.constantFrom(0.9, 0.95, 0.98),
			verdict: fc.constantFrom('conforms' as const, 'does-not-conform' as const, 'inconclusive' as const),
		})
		fc.assert(
			fc.property(fc.array(arbitraryPoint, { maxLength: 80 }), (raw) => {
				const all = raw.map((fields) => point(fields))
				for (const by of ['supplier', 'instrumentCode'] as const) {
					const groups = summariseTrend(all, by)
					expect(groups.reduce((sum, group) => sum + group.containers, 0)).toBe(all.length)
					for (const group of groups) {
						if (group.mean === null) continue
						expect(group.lowest!).toBeLessThanOrEqual(group.mean + 1e-12)
						expect(group.shareBelow!).toBeGreaterThanOrEqual(0)
						expect(group.shareBelow!).toBeLessThanOrEqual(1)
					}
				}
			}),
		)
	})
})

describe(`the threshold as a step line per specification — ${PRACTICE}`, () => {
	test('a step starts where a version with another threshold first judged a run; equal thresholds make no step', () => {
		const points = [
			// Given out of time order on purpose.
			point({ recordedAt: '2026-03-01T00:00:00.000Z', versionNumber: 3, threshold: 0.97 }),
			point({ recordedAt: '2026-01-01T00:00:00.000Z', versionNumber: 1, threshold: 0.95 }),
			point({ recordedAt: '2026-02-01T00:00:00.000Z', versionNumber: 2, threshold: 0.95 }),
			point({ recordedAt: '2026-03-02T00:00:00.000Z', versionNumber: 3, threshold: 0.97 }),
		]
		expect(thresholdLines(points)).toEqual([
			{
				documentNumber: 'SPEC-0001',
				steps: [
					{ from: '2026-01-01T00:00:00.000Z', threshold: 0.95, versionNumber: 1 },
					{ from: '2026-03-01T00:00:00.000Z', threshold: 0.97, versionNumber: 3 },
				],
			},
		])
	})

	test('two specifications of one material get one line each, ordered by document number', () => {
		const lines = thresholdLines([
			point({ documentNumber: 'SPEC-0009', threshold: 0.9 }),
			point({ documentNumber: 'SPEC-0002', threshold: 0.96 }),
		])
		expect(lines.map((line) => [line.documentNumber, line.steps.map((step) => step.threshold)])).toEqual([
			['SPEC-0002', [0.96]],
			['SPEC-0009', [0.9]],
		])
		expect(thresholdLines([])).toEqual([])
	})
})

describe('the chart description', () => {
	test('counts, span, containers below the threshold and the lowest point with what explains it', () => {
		const text = describeTrend([
			point({ runId: 'r1', recordedAt: '2026-01-05T09:00:00.000Z', correlation: 0.991 }),
			point({
				runId: 'r2',
				runNumber: 'IDR-2026-0002',
				recordedAt: '2026-02-11T14:00:00.000Z',
				lotNumber: 'L7',
				containerNumber: 4,
				instrumentCode: 'IR-02',
				correlation: 0.61234,
				verdict: 'does-not-conform',
			}),
			point({ runId: 'r2', recordedAt: '2026-02-11T14:00:00.000Z', correlation: null, verdict: 'inconclusive' }),
		])
		expect(text).toBe(
			'3 containers in 2 runs from 2026-01-05 to 2026-02-11. 1 container below the acceptance threshold. ' +
				'2 containers did not clearly conform. ' +
				'Lowest correlation 0.6123: run IDR-2026-0002, lot L7, container 4, IR-02. ' +
				'1 container without a correlation (listed in the table).',
		)
	})

	test('one run on one day, all above the threshold; and no run at all', () => {
		expect(describeTrend([point({ correlation: 0.99, containerNumber: 2 })])).toBe(
			'1 container in 1 run on 2026-01-05. None is below the acceptance threshold. ' +
				'Lowest correlation 0.9900: run IDR-2026-0001, lot L1, container 2, IR-01.',
		)
		expect(describeTrend([])).toBe('No identity run of this material has been recorded yet.')
	})
})

test('the point schema refuses a correlation outside [-1, 1] and an unknown verdict (Pearson r is bounded)', () => {
	expect(TrendPointSchema.safeParse(point()).success).toBe(true)
	expect(TrendPointSchema.safeParse(point({ correlation: 1.2 })).success).toBe(false)
	expect(TrendPointSchema.safeParse({ ...point(), verdict: 'passed' }).success).toBe(false)
	expect(TrendPointSchema.safeParse({ ...point(), recordedAt: '5 January' }).success).toBe(false)
})

describe('the range a chart shows', () => {
	test('a wrong material far below does not squash the scale: it lies off the scale, below 3 × (1 − threshold)', () => {
		// Threshold 0.95: the scale reaches down to 0.95 − 3 × 0.05 = 0.80.
		const focus = correlationFocus([
			point({ correlation: 0.9991 }),
			point({ correlation: 0.9712 }),
			point({ correlation: 0.1791, verdict: 'does-not-conform' }),
		])
		expect(focus!.low).toBe(0.95)
		expect(focus!.high).toBe(0.9991)
		expect(focus!.offScaleBelow).toBeCloseTo(0.8, 12)
	})

	test('a drift inside the focus stays on the scale; the lowest threshold of several versions counts', () => {
		const focus = correlationFocus([
			point({ correlation: 0.99, threshold: 0.97 }),
			point({ correlation: 0.86, threshold: 0.95, verdict: 'does-not-conform' }),
			point({ correlation: null, verdict: 'inconclusive' }),
		])
		expect(focus).toEqual({ low: 0.86, high: 0.99, offScaleBelow: null })
	})

	test('a threshold of 1 still leaves a scale (at least 0.01 per step); nothing to show gives null', () => {
		// 1 − 3 × 0.01 = 0.97: a correlation of 0.9 lies off the scale.
		const focus = correlationFocus([point({ correlation: 0.9, threshold: 1 })])
		expect(focus).toMatchObject({ low: 1, high: 1 })
		expect(focus!.offScaleBelow).toBeCloseTo(0.97, 12)
		expect(correlationFocus([])).toBeNull()
	})
})
