/**
 * Import benchmark: our importer's rate in MB/s on a large compressed JCAMP-DX file (SQZ+DUP, 18669 points), and
 * its time relative to the bare parser package (jcampconverter) decoding the same bytes in the same run.
 * Ours does more (Y-check, header/data consistency, unit conversion to absorbance, line-numbered errors);
 * the goal is that all of it costs at most 1.3× the bare parser's time.
 */
import { convert } from 'jcampconverter'
import { importSpectrum } from '#shared/spectra/import.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

export type ImportBenchMetric = { name: string; value: number; unit: string; ratio?: number; goal?: string }

const FILE = 'format/sqz_dup_0p5cm_18669pts.jdx'
const WARMUP_RUNS = 30
const BATCHES = 15
const RUNS_PER_BATCH = 20

/** Goal from the issue: our import overhead within 1.3× of the bare parser package. */
export const IMPORT_OVERHEAD_GOAL = 1.3

/**
 * Measure both parsers on the same bytes, interleaving batches so that machine noise hits both alike; the
 * median batch time is used. Throws if either parser fails on the file (the bench would be meaningless).
 */
export async function benchImport(): Promise<Array<ImportBenchMetric>> {
	const bytes = readReferenceFile(FILE)
	const ours = () => {
		const result = importSpectrum(bytes)
		if (!result.ok) throw new Error(`our importer refused ${FILE}: ${result.error.message}`)
		return result.value.spectrum.x.length
	}
	const bare = () => {
		const result = convert(bytes)
		return result.flatten[0]?.spectra[0]?.data?.x?.length ?? 0
	}
	if (ours() !== 18669 || bare() !== 18669) throw new Error(`${FILE}: the parsers disagree on the point count`)
	for (let i = 0; i < WARMUP_RUNS; i++) {
		ours()
		bare()
	}
	const ourTimes: Array<number> = []
	const bareTimes: Array<number> = []
	for (let b = 0; b < BATCHES; b++) {
		const order = b % 2 === 0 ? [ours, bare] : [bare, ours]
		for (const fn of order) {
			const start = performance.now()
			for (let r = 0; r < RUNS_PER_BATCH; r++) fn()
			const perRun = (performance.now() - start) / RUNS_PER_BATCH
			;(fn === ours ? ourTimes : bareTimes).push(perRun)
		}
		// Yield between batches so a caller's timers and the garbage collector get a turn.
		await new Promise((resolve) => setTimeout(resolve, 0))
	}
	const ourMs = median(ourTimes)
	const bareMs = median(bareTimes)
	const megabytes = bytes.length / 1e6
	return [
		{
			name: `import rate, ${FILE.split('/').pop()} (${(bytes.length / 1024).toFixed(0)} kB, SQZ+DUP, 18669 points)`,
			value: round(megabytes / (ourMs / 1000)),
			unit: 'MB/s',
			ratio: round(ourMs / bareMs),
			goal: `time ≤ ${IMPORT_OVERHEAD_GOAL}× the bare parser's`,
		},
		{ name: 'bare parser (jcampconverter) on the same file', value: round(megabytes / (bareMs / 1000)), unit: 'MB/s' },
		{ name: 'one import of that file', value: round(ourMs), unit: 'ms' },
	]
}

function median(values: Array<number>): number {
	const sorted = [...values].sort((a, b) => a - b)
	const mid = sorted.length >> 1
	return sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
}

function round(v: number): number {
	return Math.round(v * 1000) / 1000
}
