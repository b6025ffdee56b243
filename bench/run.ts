import type { BenchTable } from './load.ts'

/**
 * `npm run bench [name]`: every benchmark, or those whose title contains `name` (e.g. `npm run bench -- load`), each
 * printing values and ratios measured in this one run (a ratio compares two things timed side by side, so it means
 * something on any machine).
 */
type Measurement = { name: string; value: number; unit: string; ratio?: number; goal?: string }
type Bench = { title: string; run: () => Promise<Array<Measurement> | BenchTable> }

const benches: Array<Bench> = [
	{ title: 'Spectral engine', run: async () => (await import('./engine.ts')).benchEngine() },
	{ title: 'Import', run: async () => (await import('./import.ts')).benchImport() },
	{ title: 'Dossier', run: async () => (await import('./dossier.ts')).benchDossier() },
	{ title: 'Identity run', run: async () => (await import('./identity-run.ts')).benchIdentityRun() },
	{ title: 'Load over HTTP (10,000 specifications)', run: async () => (await import('./load.ts')).benchLoad() },
]

function printMeasurements(measurements: Array<Measurement>) {
	for (const m of measurements) {
		const value = m.value >= 100 ? m.value.toFixed(0) : m.value >= 1 ? m.value.toFixed(2) : m.value.toPrecision(3)
		const ratio = m.ratio === undefined ? '' : `  ratio ${m.ratio.toFixed(2)}`
		const goal = m.goal ? `  (goal: ${m.goal})` : ''
		console.log(`  ${m.name.padEnd(58)} ${value.padStart(10)} ${m.unit}${ratio}${goal}`)
	}
}

/** Columns padded to their widest cell; the first two left-aligned (names), the rest right-aligned (numbers). */
function printTable(table: BenchTable) {
	const widths = table.columns.map((column, i) => Math.max(column.length, ...table.rows.map((row) => row[i]!.length)))
	const line = (cells: Array<string>) =>
		`  ${cells.map((cell, i) => (i < 2 ? cell.padEnd(widths[i]!) : cell.padStart(widths[i]!))).join('  ')}`
	console.log(line(table.columns))
	console.log(`  ${widths.map((width) => '-'.repeat(width)).join('  ')}`)
	for (const row of table.rows) console.log(line(row))
	for (const note of table.notes) console.log(`  ${note}`)
}

const only = process.argv[2]
for (const bench of benches) {
	if (only && !bench.title.toLowerCase().includes(only.toLowerCase())) continue
	console.log(`\n${bench.title}`)
	const result = await bench.run()
	if (Array.isArray(result)) printMeasurements(result)
	else printTable(result)
}
