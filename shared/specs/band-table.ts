import type { BandRow, SpecVersionContent } from '#shared/specs/version-content.ts'
import { bandTolerance } from '#shared/spectra/criteria.ts'

export type BandRowProblem = { rowId: string; field: 'position' | 'tolerance' | 'row'; message: string }

/**
 * Checks a band table against its method: every position inside the recorded range, tolerances positive,
 * and no two rows within each other's tolerance windows (they would match the same sample peak).
 */
export function validateBandTable(
	bands: ReadonlyArray<BandRow>,
	method: SpecVersionContent['method'],
	defaultTolerance: number | null,
): Array<BandRowProblem> {
	const problems: Array<BandRowProblem> = []
	for (const row of bands) {
		if (row.position < method.rangeFrom || row.position > method.rangeTo) {
			problems.push({
				rowId: row.id,
				field: 'position',
				message: `${row.position} cm⁻¹ is outside the method's range (${method.rangeFrom}–${method.rangeTo} cm⁻¹)`,
			})
		}
		if (row.tolerance !== null && !(row.tolerance > 0)) {
			problems.push({ rowId: row.id, field: 'tolerance', message: 'The tolerance must be a positive number of cm⁻¹' })
		}
	}
	const tolerance = (row: BandRow) =>
		bandTolerance({ position: row.position, tolerance: row.tolerance ?? undefined }, defaultTolerance)
	const sorted = [...bands].sort((a, b) => a.position - b.position)
	for (let index = 1; index < sorted.length; index++) {
		const lower = sorted[index - 1]!
		const upper = sorted[index]!
		const reach = tolerance(lower) + tolerance(upper)
		if (upper.position - lower.position <= reach) {
			problems.push({
				rowId: upper.id,
				field: 'row',
				message: `${upper.position} and ${lower.position} cm⁻¹ are within each other's tolerance (±${tolerance(upper).toFixed(1)} and ±${tolerance(lower).toFixed(1)} cm⁻¹): one sample band could satisfy both. Narrow the tolerances or drop a row.`,
			})
		}
	}
	return problems
}

/** Intensity class of the trade from a band's height relative to the strongest band (common practice, no source). */
export function intensityClassFor(relative: number): BandRow['intensityClass'] {
	if (relative >= 0.75) return 'vs'
	if (relative >= 0.4) return 's'
	if (relative >= 0.15) return 'm'
	if (relative >= 0.05) return 'w'
	return 'vw'
}
