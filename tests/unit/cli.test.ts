/**
 * The command-line tool, spawned as a user runs it (`npx bandproof …` goes through bin/bandproof.mjs), on the real
 * spectra of the shared reference set: exit codes, JSON shapes, and one-line errors on broken files.
 */
import { spawnSync } from 'node:child_process'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { expect, test } from 'vitest'
import { referenceSpectraDir } from '#tests/support/reference-spectra.ts'

const ROOT = fileURLToPath(new URL('../../', import.meta.url))
const SPAWN_TIMEOUT = 60_000

function ref(relPath: string): string {
	return join(referenceSpectraDir(), relPath)
}

function cli(...args: Array<string>) {
	const run = spawnSync(process.execPath, [join(ROOT, 'bin', 'bandproof.mjs'), ...args], {
		cwd: ROOT,
		encoding: 'utf8',
		timeout: SPAWN_TIMEOUT,
	})
	return { status: run.status, stdout: run.stdout, stderr: run.stderr }
}

function json(...args: Array<string>): Record<string, unknown> {
	const run = cli(...args, '--json')
	if (run.status !== 0) throw new Error(`exit ${run.status}: ${run.stderr}`)
	return JSON.parse(run.stdout) as Record<string, unknown>
}

/** Bad input: exit 2, nothing on stdout, exactly one line on stderr, no stack trace. */
function expectOneLineError(run: ReturnType<typeof cli>, mentions: string) {
	expect(run.status).toBe(2)
	expect(run.stdout).toBe('')
	expect(run.stderr.endsWith('\n')).toBe(true)
	expect(run.stderr.trimEnd().split('\n')).toHaveLength(1)
	expect(run.stderr).toMatch(/^bandproof: /)
	expect(run.stderr).not.toMatch(/\bat .+:\d+:\d+|Error:/)
	expect(run.stderr).toContain(mentions)
}

test(
	'inspect --json reports what was read (SOURCES.md polystyrene: FIX, 1844 pts, 447.5–4002.3, 1/CM / TRANSMITTANCE)',
	{ timeout: SPAWN_TIMEOUT },
	() => {
		const out = json('inspect', ref('polystyrene/ps_film_digilab3240_4cm_FIX.jdx'))
		expect(out).toMatchObject({
			points: 1844,
			xUnits: '1/CM',
			yUnits: 'TRANSMITTANCE',
			title: 'FIX form (FILE: jtpolys.jdx)',
			warnings: [],
		})
		expect(out['firstX']).toBeCloseTo(447.48, 2)
		expect(out['lastX']).toBeCloseTo(4002.28, 2)
	},
)

test(
	'inspect in text names the warnings (SOURCES.md: the DIFDUP polystyrene file has a wrong YFACTOR)',
	{ timeout: SPAWN_TIMEOUT },
	() => {
		const run = cli('inspect', ref('polystyrene/ps_film_digilab3240_4cm_DIFDUP.jdx'))
		expect(run.status).toBe(0)
		expect(run.stdout).toMatch(/points\s+1844/)
		expect(run.stdout).toContain('line 18: ##FIRSTY=')
	},
)

test(
	'broken files give exit 2 and one line naming the line and problem (SOURCES.md format/malformed rows)',
	{ timeout: 4 * SPAWN_TIMEOUT },
	() => {
		expectOneLineError(cli('inspect', ref('format/malformed/ycheck_mismatch.jdx')), 'line 31: the DIF check value')
		expectOneLineError(cli('inspect', ref('format/malformed/empty.jdx')), 'empty')
		expectOneLineError(cli('peaks', ref('format/malformed/binary_garbage.jdx')), 'binary')
		expectOneLineError(cli('polystyrene', ref('format/cr_line_endings_mass_spectrum.jdx')), 'MASS SPECTRUM')
	},
)

test('usage errors give exit 2 and one line', { timeout: 4 * SPAWN_TIMEOUT }, () => {
	expectOneLineError(cli('frobnicate'), 'unknown command')
	expectOneLineError(cli('compare', '--sample', ref('compounds/aniline_scan.jdx')), '--reference')
	expectOneLineError(cli('inspect', join(tmpdir(), 'bandproof-no-such-file.jdx')), 'cannot be read (ENOENT)')
	expectOneLineError(cli('inspect', '--bogus', ref('compounds/aniline_scan.jdx')), "'--bogus'")
	expect(cli('--help').status).toBe(0)
})

test(
	'compare: two measurements of the same sample conform (SOURCES.md unil Z140 replicates, r ≈ 0.998)',
	{ timeout: SPAWN_TIMEOUT },
	() => {
		const out = json(
			'compare',
			'--reference',
			ref('compounds/unil_tablet_0140_1a_absorbance.jdx'),
			'--sample',
			ref('compounds/unil_tablet_0140_1b_absorbance.jdx'),
		)
		expect(out['verdict']).toBe('conforms')
		expect(out['correlation']).toBeGreaterThan(0.99)
		expect(typeof out['derivativeCorrelation']).toBe('number')
		expect(Array.isArray(out['flags'])).toBe(true)
		expect(out['bands']).toEqual([])
	},
)

test(
	'compare: positional isomers do not conform, and that is a result: exit 0 (SOURCES.md 3-chloroaniline "must not match")',
	{ timeout: SPAWN_TIMEOUT },
	() => {
		const run = cli(
			'compare',
			'--reference',
			ref('compounds/4_chloroaniline_solid_pe1000.jdx'),
			'--sample',
			ref('compounds/3_chloroaniline_pe1000.jdx'),
			'--min-correlation',
			'0.95',
			'--min-derivative-correlation',
			'0.9',
		)
		expect(run.status).toBe(0)
		expect(run.stdout).toContain('DOES NOT CONFORM')
	},
)

test(
	'compare --criteria FILE.json: bands carry expected, observed, shift and withinTolerance (FACTS.md §1.1 polystyrene bands)',
	{ timeout: 2 * SPAWN_TIMEOUT },
	() => {
		const dir = mkdtempSync(join(tmpdir(), 'bandproof-cli-'))
		try {
			const criteria = join(dir, 'criteria.json')
			// Ph. Eur. 2.2.24 polystyrene positions (FACTS.md §1.1, READ-2°), ±1 cm⁻¹.
			writeFileSync(
				criteria,
				JSON.stringify({
					minCorrelation: 0.98,
					bands: [
						{ position: 1601.2, tolerance: 1 },
						{ position: 1028.3, tolerance: 1 },
						{ position: 2849.5, tolerance: 1 },
					],
				}),
			)
			const out = json(
				'compare',
				'--reference',
				ref('polystyrene/ps_film_digilab3240_4cm_FIX.jdx'),
				'--sample',
				ref('polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx'),
				'--criteria',
				criteria,
			)
			const bands = out['bands'] as Array<Record<string, unknown>>
			expect(bands).toHaveLength(3)
			for (const band of bands) {
				expect(Object.keys(band)).toEqual(expect.arrayContaining(['expected', 'observed', 'shift', 'withinTolerance']))
				expect(typeof band['expected']).toBe('number')
			}
			expect(bands[0]).toMatchObject({ expected: 1601.2, withinTolerance: true })
			expect(['conforms', 'does-not-conform', 'inconclusive']).toContain(out['verdict'])
			const bad = join(dir, 'bad.json')
			writeFileSync(bad, JSON.stringify({ minCorrelation: 3 }))
			expectOneLineError(
				cli(
					'compare',
					'--reference',
					ref('polystyrene/ps_film_digilab3240_4cm_FIX.jdx'),
					'--sample',
					ref('polystyrene/ps_film_digilab3240_4cm_FIX.jdx'),
					'--criteria',
					bad,
				),
				'minCorrelation',
			)
		} finally {
			rmSync(dir, { recursive: true, force: true })
		}
	},
)

test(
	'polystyrene --json: the 2 cm⁻¹ film passes with every deviation reported (SOURCES.md pe1600 bands; FACTS.md §1.1 ±1 cm⁻¹)',
	{ timeout: SPAWN_TIMEOUT },
	() => {
		const out = json('polystyrene', ref('polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx'))
		expect(out['pass']).toBe(true)
		const bands = out['bands'] as Array<Record<string, number | boolean | null>>
		expect(bands.length).toBeGreaterThanOrEqual(7)
		for (const band of bands) {
			expect(Object.keys(band)).toEqual(
				expect.arrayContaining(['nominal', 'observed', 'deviation', 'tolerance', 'pass']),
			)
			expect(Math.abs(band['deviation'] as number)).toBeLessThanOrEqual(band['tolerance'] as number)
		}
	},
)

test(
	'peaks --json: peaks with position, intensity, width and groups with name, confidence, evidence (SOURCES.md acetophenone, C=O 1679)',
	{ timeout: SPAWN_TIMEOUT },
	() => {
		const out = json('peaks', ref('compounds/acetophenone_pe1000.jdx'))
		const peaks = out['peaks'] as Array<Record<string, number>>
		expect(peaks.some((p) => Math.abs(p['position']! - 1679) < 3)).toBe(true)
		for (const p of peaks) expect(Object.keys(p)).toEqual(expect.arrayContaining(['position', 'intensity', 'width']))
		const groups = out['groups'] as Array<Record<string, unknown>>
		expect(groups.length).toBeGreaterThan(0)
		for (const g of groups) expect(Object.keys(g)).toEqual(expect.arrayContaining(['name', 'confidence', 'evidence']))
	},
)

test(
	'search --json ranks the library; the replicate comes first after the sample itself (SOURCES.md unil Z189 replicates)',
	{ timeout: SPAWN_TIMEOUT },
	() => {
		const out = json(
			'search',
			'--library',
			ref('compounds'),
			'--sample',
			ref('compounds/unil_tablet_0189_1a_absorbance.jdx'),
			'--top',
			'3',
		)
		const results = out['results'] as Array<{ file: string; correlation: number }>
		expect(results).toHaveLength(3)
		expect(results.map((r) => r.file).slice(0, 2)).toEqual([
			'unil_tablet_0189_1a_absorbance.jdx',
			'unil_tablet_0189_1b_absorbance.jdx',
		])
		for (let i = 1; i < results.length; i++)
			expect(results[i]!.correlation).toBeLessThanOrEqual(results[i - 1]!.correlation)
	},
)

test('npm run cli -- … runs the same tool', { timeout: SPAWN_TIMEOUT }, () => {
	const npm = process.platform === 'win32' ? 'npm.cmd' : 'npm'
	const run = spawnSync(
		npm,
		['run', '-s', 'cli', '--', 'inspect', ref('compounds/indene_FIX_absorbance.jdx'), '--json'],
		{ cwd: ROOT, encoding: 'utf8', timeout: SPAWN_TIMEOUT },
	)
	expect(run.status).toBe(0)
	expect(JSON.parse(run.stdout)).toMatchObject({ points: 3601, yUnits: 'ABSORBANCE' })
})
