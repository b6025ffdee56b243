export {}

/**
 * `npm run bench`: every benchmark, each printing values and ratios measured in this one run (a ratio
 * compares two things timed side by side, so it means something on any machine).
 */
type Measurement = { name: string; value: number; unit: string; ratio?: number; goal?: string }
type Bench = { title: string; run: () => Promise<Array<Measurement>> }

const benches: Array<Bench> = [
	{ title: 'Spectral engine', run: async () => (await import('./engine.ts')).benchEngine() },
	{ title: 'Import', run: async () => (await import('./import.ts')).benchImport() },
	{ title: 'Dossier', run: async () => (await import('./dossier.ts')).benchDossier() },
	{ title: 'Identity run', run: async () => (await import('./identity-run.ts')).benchIdentityRun() },
]

const only = process.argv[2]
for (const bench of benches) {
	if (only && !bench.title.toLowerCase().includes(only.toLowerCase())) continue
	console.log(`\n${bench.title}`)
	for (const m of await bench.run()) {
		const value = m.value >= 100 ? m.value.toFixed(0) : m.value >= 1 ? m.value.toFixed(2) : m.value.toPrecision(3)
		const ratio = m.ratio === undefined ? '' : `  ratio ${m.ratio.toFixed(2)}`
		const goal = m.goal ? `  (goal: ${m.goal})` : ''
		console.log(`  ${m.name.padEnd(58)} ${value.padStart(10)} ${m.unit}${ratio}${goal}`)
	}
}
