/**
 * Loads a real spectrum from the shared reference set (read in place, never copied) through the product importer.
 */
import { importSpectrum } from '#shared/spectra/import.ts'
import type { ImportedSpectrum, Spectrum } from '#shared/spectra/types.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

export function importReference(relPath: string): ImportedSpectrum {
	const fileName = relPath.split('/').pop() ?? relPath
	const result = importSpectrum(readReferenceFile(relPath), { fileName })
	if (!result.ok) throw new Error(`${relPath}: ${result.error.message}`)
	return result.value
}

export function loadReference(relPath: string): Spectrum {
	return importReference(relPath).spectrum
}
