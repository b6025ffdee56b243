/**
 * Container sample files for identity-run tests, built from the real spectra of the shared set (read in place).
 *
 * Each container of a lot needs its own measurement (the run refuses a file used twice), but the shared set holds
 * one or two measurements per compound. A replicate is therefore the real spectrum with a small, seeded,
 * normally distributed noise (σ = 0.002 absorbance, about the noise of a routine mid-IR scan: common practice,
 * no source), written as JCAMP-DX. The verdicts still come from the engine comparing real band patterns.
 */
import { importSpectrum } from '#shared/spectra/import.ts'
import { encodeSpectrumJcamp } from '#shared/spectra/encode-jcamp.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

/** Park–Miller style LCG with Box–Muller: deterministic noise for a seed. */
function gaussian(seed: number) {
	let state = (seed % 2147483646) + 1
	const uniform = () => {
		state = (state * 48271) % 2147483647
		return state / 2147483647
	}
	return () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform())
}

/** A replicate measurement of a shared real spectrum as JCAMP-DX bytes. */
export function replicateOf(relPath: string, seed: number, sigma = 0.002): Uint8Array {
	return replicateOfFile(readReferenceFile(relPath), relPath, seed, sigma)
}

/** A replicate measurement of any spectrum file (e.g. one downloaded from the app) as JCAMP-DX bytes. */
export function replicateOfFile(bytes: Uint8Array, fileName: string, seed: number, sigma = 0.002): Uint8Array {
	const relPath = fileName
	const imported = importSpectrum(bytes, { fileName })
	if (!imported.ok) throw new Error(`${fileName}: ${imported.error.message}`)
	const noise = gaussian(seed)
	const { x, y } = imported.value.spectrum
	const noisy = Float64Array.from(y, (value) => value + sigma * noise())
	const text = encodeSpectrumJcamp(
		{ x, y: noisy },
		{ title: `Replicate ${seed} of ${relPath.split('/').at(-1)}`, labels: { ORIGIN: 'Bandproof tests' } },
	)
	return new TextEncoder().encode(text)
}

/** Files named as an analyst would ('<lot>-C01.jdx' …), one per container. */
export function containerFiles(
	lotNumber: string,
	sources: ReadonlyArray<{ relPath: string; seed?: number }>,
): Array<{ fileName: string; bytes: Uint8Array }> {
	return sources.map((source, index) => ({
		fileName: `${lotNumber}-C${String(index + 1).padStart(2, '0')}.jdx`,
		bytes: source.seed === undefined ? readReferenceFile(source.relPath) : replicateOf(source.relPath, source.seed),
	}))
}
