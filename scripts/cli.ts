/**
 * Bandproof command-line tool: the same pure engine as the web app, on files.
 *
 *   npm run cli -- <command> …      or      npx bandproof <command> …
 *
 * Commands: inspect, compare, polystyrene, peaks, search (see USAGE). `--json` prints one JSON document on stdout;
 * without it the output is plain text for people. Exit status: 0 when a result was produced (a "does not conform"
 * verdict is a result), 2 for bad input (one line on stderr, never a stack trace), 1 for an internal error.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { basename, join, relative } from 'node:path'
import { parseArgs } from 'node:util'
import { pathToFileURL } from 'node:url'
import { compareSpectra, type Comparison } from '#shared/spectra/compare.ts'
import {
	AcceptanceCriteriaSchema,
	type AcceptanceCriteria,
	type AcceptanceCriteriaInput,
} from '#shared/spectra/criteria.ts'
import { suggestGroups } from '#shared/spectra/groups.ts'
import { importSpectrum } from '#shared/spectra/import.ts'
import { pickPeaks } from '#shared/spectra/peaks.ts'
import { checkPolystyrene, POLYSTYRENE_TABLES, type PolystyreneCheck } from '#shared/spectra/polystyrene.ts'
import { type LibraryEntry, prepareLibrary, searchLibrary } from '#shared/spectra/search.ts'
import type { ImportedSpectrum } from '#shared/spectra/types.ts'

const USAGE = `usage: bandproof <command> [options]

commands:
  inspect FILE                           what was read: points, range, units, title, warnings
  compare --reference FILE --sample FILE [--criteria FILE.json | --min-correlation R [--min-derivative-correlation R]]
                                         identity comparison and verdict
  polystyrene FILE [--table ph-eur-ft|ph-eur-monochromator|jp]
                                         wavenumber-scale and resolution check of a polystyrene film
  peaks FILE                             picked peaks with functional-group suggestions
  search --library DIR --sample FILE [--top N]
                                         rank the spectra in DIR by correlation with the sample

options:
  --json                                 print JSON instead of text
  -h, --help                             show this help`

/**
 * Minimum correlation when neither --criteria nor --min-correlation is given: 0.95, the threshold quoted from
 * regulatory NIR guidance (FACTS.md §2.3, READ-2°). Pharmacopoeias give no numeric mid-IR threshold, so each
 * specification should set its own.
 */
export const DEFAULT_MIN_CORRELATION = 0.95

/** Files a library folder may hold; anything else is ignored. */
const SPECTRUM_FILE = /\.(jdx|dx|jcamp|jcm|csv|tsv|txt|xy|dat|prn)$/i

/** Bad input: reported as one line on stderr with exit status 2. */
class InputError extends Error {}

type Output = { stdout: (text: string) => void; stderr: (text: string) => void }

/**
 * Run one command. Returns the exit status; writes results to `out.stdout` and the one-line error to `out.stderr`.
 * Never throws.
 */
export async function main(argv: ReadonlyArray<string>, out: Output = defaultOutput()): Promise<number> {
	try {
		const [command, ...rest] = argv
		if (command === undefined || command === '-h' || command === '--help' || command === 'help') {
			out.stdout(`${USAGE}\n`)
			return command === undefined ? 2 : 0
		}
		const run = COMMANDS[command]
		if (!run)
			throw new InputError(`unknown command "${command}"; try inspect, compare, polystyrene, peaks or search (--help)`)
		const { text, json } = await run(rest)
		out.stdout(rest.includes('--json') ? `${JSON.stringify(json, jsonNumbers, 2)}\n` : `${text}\n`)
		return 0
	} catch (e) {
		if (e instanceof InputError) {
			out.stderr(`bandproof: ${oneLine(e.message)}\n`)
			return 2
		}
		out.stderr(`bandproof: internal error: ${oneLine(e instanceof Error ? e.message : String(e))}\n`)
		return 1
	}
}

type Result = { text: string; json: unknown }
type Command = (args: Array<string>) => Promise<Result> | Result

const COMMANDS: Record<string, Command> = { inspect, compare, polystyrene, peaks, search }

function parse<T extends Record<string, { type: 'string' | 'boolean'; short?: string }>>(
	args: Array<string>,
	options: T,
	positionals: number,
) {
	let parsed
	try {
		parsed = parseArgs({
			args,
			options: { ...options, json: { type: 'boolean' }, help: { type: 'boolean', short: 'h' } },
			allowPositionals: true,
			strict: true,
		})
	} catch (e) {
		throw new InputError(e instanceof Error ? e.message.replace(/\. To specify .*$/, '') : String(e))
	}
	if (parsed.positionals.length > positionals) {
		throw new InputError(`unexpected argument "${parsed.positionals[positionals]}"`)
	}
	return parsed
}

function load(path: string): ImportedSpectrum {
	let bytes: Uint8Array
	try {
		if (statSync(path).isDirectory()) throw new InputError(`${path}: is a folder, not a spectrum file`)
		bytes = new Uint8Array(readFileSync(path))
	} catch (e) {
		if (e instanceof InputError) throw e
		throw new InputError(`${path}: cannot be read (${(e as NodeJS.ErrnoException).code ?? 'error'})`)
	}
	const result = importSpectrum(bytes, { fileName: basename(path) })
	if (!result.ok) throw new InputError(`${path}: ${result.error.message}`)
	return result.value
}

function requireFile(value: string | undefined, what: string): string {
	if (value === undefined || value === '') throw new InputError(`${what} is missing (--help shows the usage)`)
	return value
}

// ---------------------------------------------------------------------------------------------------------------
// inspect

function inspect(args: Array<string>): Result {
	const { positionals } = parse(args, {}, 1)
	const file = requireFile(positionals[0], 'the FILE to inspect')
	const { spectrum, metadata, warnings } = load(file)
	const n = spectrum.x.length
	const json = {
		file,
		points: metadata.points,
		firstX: metadata.firstX,
		lastX: metadata.lastX,
		xUnits: metadata.xUnits,
		yUnits: metadata.yUnits,
		title: metadata.title,
		format: metadata.format,
		jcampVersion: metadata.jcampVersion,
		dataForm: metadata.dataForm ?? null,
		encoding: metadata.sourceEncoding ?? null,
		ordinate: metadata.ordinate,
		wavenumberRange: { from: spectrum.x[0]!, to: spectrum.x[n - 1]! },
		absorbanceRange: { min: Math.min(...spectrum.y), max: Math.max(...spectrum.y) },
		warnings,
	}
	const ordinate = {
		absorbance: 'absorbance',
		'transmittance-fraction': 'transmittance (0–1), converted to absorbance',
		'transmittance-percent': 'percent transmittance, converted to absorbance',
	}[metadata.ordinate]
	const lines = [
		file,
		row('title', metadata.title ?? '(none)'),
		row('format', [metadata.format, metadata.jcampVersion, metadata.dataForm].filter(Boolean).join(', ')),
		row('points', String(metadata.points)),
		row('x', `${fmt(metadata.firstX)} → ${fmt(metadata.lastX)} ${metadata.xUnits}`),
		row('y', `${metadata.yUnits || '(not named)'}: ${ordinate}`),
		row(
			'range',
			`${fmt(spectrum.x[0]!)}–${fmt(spectrum.x[n - 1]!)} cm⁻¹, absorbance ${fmt(json.absorbanceRange.min)} to ${fmt(json.absorbanceRange.max)}`,
		),
		row('warnings', warnings.length === 0 ? 'none' : ''),
		...warnings.map((w) => `    - ${w.line ? `line ${w.line}: ` : ''}${w.message}`),
	]
	return {
		text: lines
			.filter((l) => l !== undefined)
			.join('\n')
			.replace(/ +\n/g, '\n'),
		json,
	}
}

// ---------------------------------------------------------------------------------------------------------------
// compare

function compare(args: Array<string>): Result {
	const { values } = parse(
		args,
		{
			reference: { type: 'string' },
			sample: { type: 'string' },
			criteria: { type: 'string' },
			'min-correlation': { type: 'string' },
			'min-derivative-correlation': { type: 'string' },
		},
		0,
	)
	const referenceFile = requireFile(values.reference, '--reference FILE')
	const sampleFile = requireFile(values.sample, '--sample FILE')
	const criteria = readCriteria(values.criteria, values['min-correlation'], values['min-derivative-correlation'])
	const reference = load(referenceFile)
	const sample = load(sampleFile)
	const comparison = compareSpectra(reference.spectrum, sample.spectrum, criteria)
	const json = {
		reference: referenceFile,
		sample: sampleFile,
		verdict: comparison.verdict,
		reasons: comparison.reasons,
		correlation: comparison.correlation,
		derivativeCorrelation: comparison.derivativeCorrelation,
		distance: comparison.distance,
		flags: comparison.flags.map((f) => ({
			code: f.code,
			spectrum: f.spectrum,
			severity: f.severity,
			makesInconclusive: f.makesInconclusive,
			message: f.message,
		})),
		bands: comparison.bands.map((b) => ({
			expected: b.expected.position,
			tolerance: b.expected.tolerance,
			assignment: b.expected.assignment,
			required: b.expected.required,
			observed: b.observed,
			shift: b.shift,
			withinTolerance: b.withinTolerance,
			relativeIntensity: b.relativeIntensity,
		})),
		extraBands: comparison.extraBands,
		criteria: { minCorrelation: criteria.minCorrelation, minDerivativeCorrelation: criteria.minDerivativeCorrelation },
		grid: comparison.grid,
		importWarnings: { reference: reference.warnings, sample: sample.warnings },
		algorithm: comparison.algorithm,
		algorithmVersion: comparison.algorithmVersion,
	}
	return { text: compareText(referenceFile, sampleFile, comparison, criteria), json }
}

function readCriteria(
	file: string | undefined,
	minCorrelation: string | undefined,
	minDerivative: string | undefined,
): AcceptanceCriteria {
	if (file !== undefined) {
		if (minCorrelation !== undefined || minDerivative !== undefined) {
			throw new InputError(
				'give either --criteria FILE.json or --min-correlation/--min-derivative-correlation, not both',
			)
		}
		let raw: unknown
		try {
			raw = JSON.parse(readFileSync(file, 'utf8'))
		} catch (e) {
			const why =
				e instanceof SyntaxError
					? `is not valid JSON (${e.message})`
					: `cannot be read (${(e as NodeJS.ErrnoException).code ?? 'error'})`
			throw new InputError(`${file}: ${why}`)
		}
		const parsed = AcceptanceCriteriaSchema.safeParse(raw)
		if (!parsed.success) {
			const issue = parsed.error.issues[0]!
			const where = issue.path.length > 0 ? issue.path.join('.') : 'criteria'
			throw new InputError(`${file}: ${where}: ${issue.message}`)
		}
		return parsed.data
	}
	const input: AcceptanceCriteriaInput = {
		minCorrelation:
			minCorrelation === undefined ? DEFAULT_MIN_CORRELATION : number(minCorrelation, '--min-correlation'),
	}
	if (minDerivative !== undefined)
		input.minDerivativeCorrelation = number(minDerivative, '--min-derivative-correlation')
	const parsed = AcceptanceCriteriaSchema.safeParse(input)
	if (!parsed.success)
		throw new InputError(`criteria: ${parsed.error.issues[0]!.path.join('.')}: ${parsed.error.issues[0]!.message}`)
	return parsed.data
}

function number(raw: string, name: string): number {
	const v = Number(raw)
	if (raw.trim() === '' || !Number.isFinite(v)) throw new InputError(`${name} "${raw}" is not a number`)
	if (v < -1 || v > 1) throw new InputError(`${name} ${raw} is outside −1 … 1`)
	return v
}

function compareText(referenceFile: string, sampleFile: string, c: Comparison, criteria: AcceptanceCriteria): string {
	const verdict = { conforms: 'CONFORMS', 'does-not-conform': 'DOES NOT CONFORM', inconclusive: 'INCONCLUSIVE' }[
		c.verdict
	]
	const lines = [
		`reference  ${referenceFile}`,
		`sample     ${sampleFile}`,
		'',
		`verdict    ${verdict}`,
		...c.reasons.map((r) => `           - ${r}`),
		'',
		`correlation             ${fmt(c.correlation, 4)} (minimum ${fmt(criteria.minCorrelation, 4)})`,
		`derivative correlation  ${fmt(c.derivativeCorrelation, 4)}${criteria.minDerivativeCorrelation === null ? ' (not a criterion)' : ` (minimum ${fmt(criteria.minDerivativeCorrelation, 4)})`}`,
		`distance                ${fmt(c.distance, 4)}`,
		`compared                ${fmt(c.grid.from)}–${fmt(c.grid.to)} cm⁻¹, ${c.grid.comparedPoints} of ${c.grid.points} points, step ${fmt(c.grid.step, 3)} cm⁻¹`,
	]
	if (c.bands.length > 0) {
		lines.push('', 'bands      expected   observed   shift   tolerance  result')
		for (const b of c.bands) {
			lines.push(
				`           ${pad(fmt(b.expected.position), 10)} ${pad(b.observed === null ? '—' : fmt(b.observed), 10)} ${pad(b.shift === null ? '—' : fmt(b.shift, 1), 7)} ±${pad(fmt(b.expected.tolerance, 1), 9)} ${b.withinTolerance ? 'ok' : b.expected.required ? 'FAIL' : 'missing (optional)'}`,
			)
		}
	}
	if (c.extraBands.length > 0) {
		lines.push(
			'',
			`strong sample bands the reference lacks: ${[...c.extraBands]
				.sort((a, b) => b.position - a.position)
				.map((b) => fmt(b.position, 0))
				.join(', ')} cm⁻¹`,
		)
	}
	if (c.flags.length > 0) {
		lines.push('', 'flags')
		for (const f of c.flags)
			lines.push(
				`           - ${f.spectrum}: ${f.message}${f.makesInconclusive ? ' (makes the verdict inconclusive)' : ''}`,
			)
	}
	lines.push('', 'A conforming comparison supports, but does not replace, the laboratory’s approved procedure.')
	return lines.join('\n')
}

// ---------------------------------------------------------------------------------------------------------------
// polystyrene

function polystyrene(args: Array<string>): Result {
	const { values, positionals } = parse(args, { table: { type: 'string' } }, 1)
	const file = requireFile(positionals[0], 'the polystyrene FILE')
	const tables = Object.keys(POLYSTYRENE_TABLES)
	const table = values.table ?? 'ph-eur-ft'
	if (!tables.includes(table)) throw new InputError(`--table "${table}" is not one of ${tables.join(', ')}`)
	const { spectrum } = load(file)
	const check = checkPolystyrene(spectrum, { table: table as keyof typeof POLYSTYRENE_TABLES })
	const json = {
		file,
		pass: check.pass,
		wavenumberPass: check.wavenumberPass,
		resolutionPass: check.resolutionPass,
		bands: check.bands.map((b) => ({
			nominal: b.nominal,
			observed: b.observed,
			deviation: b.deviation,
			tolerance: b.tolerance,
			pass: b.pass,
			method: b.method,
		})),
		resolution: check.resolution,
		reasons: check.reasons,
		table: check.table,
		algorithm: check.algorithm,
		algorithmVersion: check.algorithmVersion,
	}
	return { text: polystyreneText(file, check), json }
}

function polystyreneText(file: string, c: PolystyreneCheck): string {
	const lines = [
		file,
		`table      ${c.table.title}`,
		'',
		`result     ${c.pass ? 'PASS' : 'FAIL'}`,
		...c.reasons.map((r) => `           - ${r}`),
		'',
		'bands      nominal    observed   deviation  tolerance  result',
		...c.bands.map(
			(b) =>
				`           ${pad(fmt(b.nominal, 1), 10)} ${pad(b.observed === null ? '—' : fmt(b.observed, 2), 10)} ${pad(b.deviation === null ? '—' : fmt(b.deviation, 2), 10)} ±${pad(fmt(b.tolerance, 1), 9)} ${b.pass ? 'pass' : 'FAIL'}${b.method === 'second-derivative' ? ' (shoulder)' : ''}`,
		),
	]
	if (c.resolution.length > 0) {
		lines.push('', 'resolution')
		for (const r of c.resolution) {
			lines.push(
				`           - ${r.description}: ${fmt(r.value, 3)} ${r.unit} (needs ${r.comparison} ${r.limit}) ${r.pass ? 'pass' : 'FAIL'}${r.counted ? '' : ' (reported, not counted)'}`,
			)
		}
	}
	return lines.join('\n')
}

// ---------------------------------------------------------------------------------------------------------------
// peaks

function peaks(args: Array<string>): Result {
	const { positionals } = parse(args, {}, 1)
	const file = requireFile(positionals[0], 'the FILE')
	const { spectrum } = load(file)
	const picked = pickPeaks(spectrum)
	const analysis = suggestGroups(spectrum, { peaks: picked })
	const json = {
		file,
		peaks: picked.map((p) => ({
			position: p.position,
			intensity: p.intensity,
			width: p.width,
			shape: p.shape,
			prominence: p.prominence,
		})),
		groups: analysis.suggestions.map((g) => ({
			id: g.id,
			name: g.name,
			confidence: g.confidence,
			evidence: g.evidence,
			note: g.note,
		})),
		caveat: analysis.caveat,
		algorithm: analysis.algorithm,
		algorithmVersion: analysis.algorithmVersion,
	}
	const strongest = [...picked]
		.sort((a, b) => b.prominence - a.prominence)
		.slice(0, 40)
		.sort((a, b) => b.position - a.position)
	const lines = [
		file,
		'',
		`peaks      ${picked.length} found${picked.length > strongest.length ? `; the ${strongest.length} most prominent, high to low wavenumber` : ''}`,
		'           position   absorbance  FWHM    shape',
		...strongest.map(
			(p) =>
				`           ${pad(fmt(p.position, 1), 10)} ${pad(fmt(p.intensity, 3), 11)} ${pad(fmt(p.width, 1), 7)} ${p.shape}`,
		),
		'',
		'functional groups (suggestions)',
		...(analysis.suggestions.length === 0 ? ['           none'] : []),
		...analysis.suggestions.map(
			(g) =>
				`           - ${g.name} [${g.confidence}]: ${g.evidence.map((e) => `${e.role} ${fmt(e.position, 0)}`).join(', ')}`,
		),
		'',
		analysis.caveat,
	]
	return { text: lines.join('\n'), json }
}

// ---------------------------------------------------------------------------------------------------------------
// search

/**
 * Rank every spectrum file in the library folder (and its sub-folders) against the sample with the engine's
 * library search (one common grid, exclusion regions removed, Pearson correlation). Files that cannot be
 * imported are listed, not fatal.
 */
function search(args: Array<string>): Result {
	const { values } = parse(
		args,
		{ library: { type: 'string' }, sample: { type: 'string' }, top: { type: 'string' } },
		0,
	)
	const dir = requireFile(values.library, '--library DIR')
	const sampleFile = requireFile(values.sample, '--sample FILE')
	const top = values.top === undefined ? 10 : Number(values.top)
	if (!Number.isInteger(top) || top < 1) throw new InputError(`--top "${values.top}" is not a positive whole number`)
	let files: Array<string>
	try {
		if (!statSync(dir).isDirectory()) throw new InputError(`${dir}: is not a folder`)
		files = listFiles(dir)
	} catch (e) {
		if (e instanceof InputError) throw e
		throw new InputError(`${dir}: cannot be read (${(e as NodeJS.ErrnoException).code ?? 'error'})`)
	}
	if (files.length === 0) throw new InputError(`${dir}: holds no spectrum files`)
	const sample = load(sampleFile)
	const entries: Array<LibraryEntry> = []
	const titles = new Map<string, string | null>()
	const skipped: Array<{ file: string; error: string }> = []
	for (const path of files) {
		const file = relative(dir, path).split('\\').join('/')
		const imported = importSpectrum(new Uint8Array(readFileSync(path)), { fileName: basename(path) })
		if (!imported.ok) {
			skipped.push({ file, error: imported.error.message })
			continue
		}
		entries.push({ id: file, spectrum: imported.value.spectrum })
		titles.set(file, imported.value.metadata.title)
	}
	if (entries.length === 0) throw new InputError(`${dir}: none of its ${files.length} files could be imported`)
	const library = prepareLibrary(entries, { precision: 'float64' })
	const found = searchLibrary(library, sample.spectrum, { top })
	if (!found.ok) throw new InputError(`${sampleFile}: ${found.error.message}`)
	const results = found.value.results.map((r) => ({
		rank: r.rank,
		file: r.id,
		correlation: r.correlation,
		coverage: r.coverage,
		title: titles.get(r.id) ?? null,
	}))
	const json = {
		sample: sampleFile,
		library: dir,
		searched: entries.length,
		results,
		skipped,
		grid: found.value.params.grid,
		algorithm: found.value.algorithm,
		algorithmVersion: found.value.algorithmVersion,
	}
	const lines = [
		`sample     ${sampleFile}`,
		`library    ${dir} (${entries.length} spectra)`,
		'',
		'rank  correlation  file',
		...results.map(
			(r) =>
				`${pad(String(r.rank), 5)} ${pad(fmt(r.correlation, 4), 12)} ${r.file}${r.title ? `  (${r.title})` : ''}${r.coverage < 0.9 ? `  [covers ${Math.round(r.coverage * 100)} % of the grid]` : ''}`,
		),
	]
	if (skipped.length > 0)
		lines.push('', `skipped ${skipped.length}:`, ...skipped.map((s) => `  - ${s.file}: ${s.error}`))
	lines.push('', 'A high rank is a screening aid, not an identification.')
	return { text: lines.join('\n'), json }
}

function listFiles(dir: string): Array<string> {
	return readdirSync(dir)
		.sort()
		.flatMap((name) => {
			const path = join(dir, name)
			if (statSync(path).isDirectory()) return listFiles(path)
			return SPECTRUM_FILE.test(name) ? [path] : []
		})
}

// ---------------------------------------------------------------------------------------------------------------
// formatting

function row(label: string, value: string): string {
	return `${pad(label, 10)} ${value}`
}

function pad(s: string, width: number): string {
	return s.length >= width ? s : s + ' '.repeat(width - s.length)
}

function fmt(v: number | null | undefined, digits = 2): string {
	if (v === null || v === undefined || Number.isNaN(v)) return '—'
	return Number(v.toFixed(digits)).toString()
}

function oneLine(s: string): string {
	return s.replace(/\s*[\r\n]+\s*/g, ' ').trim()
}

/** JSON has no NaN/Infinity: write them as null rather than produce invalid JSON. */
function jsonNumbers(_key: string, value: unknown): unknown {
	if (typeof value === 'number' && !Number.isFinite(value)) return null
	if (value instanceof Float64Array) return Array.from(value)
	return value
}

function defaultOutput(): Output {
	return { stdout: (t) => process.stdout.write(t), stderr: (t) => process.stderr.write(t) }
}

if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) {
	process.exitCode = await main(process.argv.slice(2))
}
