/**
 * Access to the shared real-spectrum set (../shared/reference-spectra relative to the repository root, i.e. outside
 * the project). Set BANDPROOF_REFERENCE_SPECTRA to read it from elsewhere. The files are read in place, never copied.
 */
import { readFileSync } from 'node:fs'
import { isAbsolute, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'

/** Absolute path of the reference-spectra folder (env BANDPROOF_REFERENCE_SPECTRA overrides the default). */
export function referenceSpectraDir(): string {
	const fromEnv = process.env['BANDPROOF_REFERENCE_SPECTRA']
	if (fromEnv !== undefined && fromEnv !== '') return isAbsolute(fromEnv) ? fromEnv : resolve(process.cwd(), fromEnv)
	const repoRoot = fileURLToPath(new URL('../../', import.meta.url))
	return resolve(repoRoot, '..', 'shared', 'reference-spectra')
}

/** Bytes of one file, by its path relative to the reference-spectra folder, e.g. 'polystyrene/ps_film_digilab3240_4cm_FIX.jdx'. */
export function readReferenceFile(relPath: string): Uint8Array {
	return new Uint8Array(readFileSync(resolve(referenceSpectraDir(), relPath)))
}
