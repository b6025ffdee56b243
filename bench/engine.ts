/**
 * Engine benchmarks: library search over 1,000 and 10,000 synthetic spectra of ~3,600 points, each against a
 * plain pass that only sums the same buffer (the memory-bandwidth floor), and the time of one comparison.
 * Synthetic spectra are sums of pseudo-Voigt bands from a fixed seed, so every run measures the same work.
 */
import { AcceptanceCriteriaSchema } from '#shared/spectra/criteria.ts'
import { compareSpectra } from '#shared/spectra/compare.ts'
import { makeGrid } from '#shared/spectra/preprocess.ts'
import { type PreparedLibrary, prepareLibrary, searchLibrary } from '#shared/spectra/search.ts'
import type { Spectrum } from '#shared/spectra/types.ts'

export type BenchMetric = { name: string; value: number; unit: string; ratio?: number; goal?: string }

/** 400–4000 cm⁻¹ at 1 cm⁻¹: 3,601 points (3,480 after the CO₂ exclusion). */
const GRID = { from: 400, to: 4000, step: 1 }

function mulberry32(seed: number): () => number {
	let state = seed >>> 0
	return () => {
		state = (state + 0x6d2b79f5) >>> 0
		let t = state
		t = Math.imul(t ^ (t >>> 15), t | 1)
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296
	}
}

/** A deterministic synthetic absorbance spectrum: 12–24 bands, small noise, slight baseline. */
function syntheticSpectrum(x: Float64Array, seed: number): Spectrum {
	const random = mulberry32(seed + 1)
	const y = new Float64Array(x.length)
	const offset = 0.02 * random()
	for (let i = 0; i < x.length; i++) y[i] = offset + 0.00001 * (x[i]! - x[0]!) * random() + 0.002 * (random() - 0.5)
	const bands = 12 + Math.floor(random() * 13)
	for (let b = 0; b < bands; b++) {
		const position = 500 + random() * 3400
		const height = 0.05 + random() * 0.9
		const halfWidth = 3 + random() * (random() < 0.1 ? 150 : 15)
		const lo = Math.max(0, Math.floor(position - 12 * halfWidth - x[0]!))
		const hi = Math.min(x.length - 1, Math.ceil(position + 12 * halfWidth - x[0]!))
		for (let i = lo; i <= hi; i++) {
			const d = (x[i]! - position) / halfWidth
			y[i] = y[i]! + height * (0.5 / (1 + d * d) + 0.5 * Math.exp(-Math.LN2 * d * d))
		}
	}
	return { x, y }
}

function buildLibrary(count: number, x: Float64Array): PreparedLibrary {
	return prepareLibrary(
		{ count, entry: (index) => ({ id: `synthetic-${index}`, spectrum: syntheticSpectrum(x, index) }) },
		{ grid: GRID, precision: 'float32' },
	)
}

/** The memory-bandwidth floor: one pass that only adds up every value of the buffer. */
function sumBuffer(data: Float32Array | Float64Array): number {
	const n = data.length
	const tail = n - (n % 4)
	let s0 = 0
	let s1 = 0
	let s2 = 0
	let s3 = 0
	for (let i = 0; i < tail; i += 4) {
		s0 += data[i]!
		s1 += data[i + 1]!
		s2 += data[i + 2]!
		s3 += data[i + 3]!
	}
	for (let i = tail; i < n; i++) s0 += data[i]!
	return s0 + s1 + s2 + s3
}

/** Median wall time in ms of `runs` calls after `warmup` calls. */
function medianTime(fn: () => unknown, runs: number, warmup: number): number {
	let sink = 0
	for (let i = 0; i < warmup; i++) sink += fn() === undefined ? 0 : 1
	const times: Array<number> = []
	for (let i = 0; i < runs; i++) {
		const start = performance.now()
		sink += fn() === undefined ? 0 : 1
		times.push(performance.now() - start)
	}
	if (sink < 0) throw new Error('unreachable')
	times.sort((a, b) => a - b)
	return times[Math.floor(times.length / 2)]!
}

/** Median wall times in ms of `a` and `b`, run alternately `runs` times each after `warmup` rounds. */
function pairedMedianTimes(a: () => unknown, b: () => unknown, runs: number, warmup: number): [number, number] {
	let sink = 0
	for (let i = 0; i < warmup; i++) sink += (a() === undefined ? 0 : 1) + (b() === undefined ? 0 : 1)
	const timesA: Array<number> = []
	const timesB: Array<number> = []
	for (let i = 0; i < runs; i++) {
		let start = performance.now()
		sink += a() === undefined ? 0 : 1
		timesA.push(performance.now() - start)
		start = performance.now()
		sink += b() === undefined ? 0 : 1
		timesB.push(performance.now() - start)
	}
	if (sink < 0) throw new Error('unreachable')
	timesA.sort((x, y) => x - y)
	timesB.sort((x, y) => x - y)
	return [timesA[Math.floor(runs / 2)]!, timesB[Math.floor(runs / 2)]!]
}

async function benchSearch(count: number, x: Float64Array): Promise<Array<BenchMetric>> {
	const library = buildLibrary(count, x)
	const sample = syntheticSpectrum(x, 7)
	const runs = count >= 10_000 ? 15 : 41
	// Interleaved, so that both measurements see the same machine state (other processes, caches, frequency).
	const [search, floor] = pairedMedianTimes(
		() => {
			const result = searchLibrary(library, sample, { top: 10 })
			if (!result.ok) throw result.error
			return result.value.results[0]
		},
		() => sumBuffer(library.data),
		runs,
		5,
	)
	const megabytes = library.data.byteLength / 1e6
	await Promise.resolve()
	const label = count.toLocaleString('en-GB')
	return [
		{
			name: `library search, ${label} spectra × ${library.rowLength} points (${megabytes.toFixed(0)} MB float32)`,
			value: search,
			unit: 'ms',
			ratio: search / floor,
			goal: 'ratio to the summing pass ≤ 2',
		},
		{ name: `summing pass over the same ${megabytes.toFixed(0)} MB (floor)`, value: floor, unit: 'ms' },
	]
}

/**
 * Run the engine benchmarks. Allocates about 140 MB for the 10,000-spectrum library; takes a few seconds.
 */
export async function benchEngine(): Promise<Array<BenchMetric>> {
	const x = makeGrid(GRID.from, GRID.to, GRID.step)
	const metrics: Array<BenchMetric> = []

	// The compare runs first, before the large libraries exist, so that their collection does not land in it.
	const reference = syntheticSpectrum(x, 11)
	const sample: Spectrum = { x, y: reference.y.map((v, i) => 1.05 * v + 0.01 + 0.001 * Math.sin(i / 7)) }
	const criteria = AcceptanceCriteriaSchema.parse({
		minCorrelation: 0.98,
		minDerivativeCorrelation: 0.95,
		range: { from: 400, to: 4000 },
		bands: [{ position: 1000, tolerance: 5 }, { position: 1600, tolerance: 5, required: false }, { position: 2900 }],
	})
	const compare = medianTime(() => compareSpectra(reference, sample, criteria), 41, 10)

	metrics.push(...(await benchSearch(1_000, x)))
	metrics.push(...(await benchSearch(10_000, x)))
	metrics.push({ name: `one compare, 2 × ${x.length} points`, value: compare, unit: 'ms', goal: '< 5 ms' })
	return metrics
}
