import { pickPeaks } from '#shared/spectra/peaks.ts'
import { suggestGroups } from '#shared/spectra/groups.ts'
import type { Spectrum } from '#shared/spectra/types.ts'
import { intensityClassFor } from '#shared/specs/band-table.ts'
import { bandTolerance } from '#shared/spectra/criteria.ts'
import type { SpecVersionContent } from '#shared/specs/version-content.ts'

/** Peaks and functional-group suggestions of one spectrum, as plain data for a page (aids, never verdicts). */
export function analyseSpectrum(spectrum: Spectrum) {
	const peaks = pickPeaks(spectrum)
	const analysis = suggestGroups(spectrum, { peaks })
	const strongest = Math.max(...peaks.map((peak) => peak.prominence), Number.EPSILON)
	return {
		peaks: peaks
			.map((peak) => ({
				position: Math.round(peak.position * 10) / 10,
				intensity: peak.intensity,
				relative: peak.prominence / strongest,
				width: Math.round(peak.width),
				shape: peak.shape,
			}))
			.sort((a, b) => b.position - a.position),
		groups: analysis.suggestions.map((suggestion) => ({
			id: suggestion.id,
			name: suggestion.name,
			confidence: suggestion.confidence,
			note: suggestion.note,
			evidence: suggestion.evidence.map((item) => ({ role: item.role, position: Math.round(item.position) })),
			sources: [...new Set(suggestion.sources.flatMap((source) => source.sources))],
		})),
		caveat: analysis.caveat,
		algorithmVersion: analysis.algorithmVersion,
	}
}

/** Smallest relative prominence of a reference peak that is offered as a band-table row (common practice, no source). */
export const SUGGESTED_BAND_MIN_RELATIVE = 0.08

/**
 * Band-table rows suggested from a reference spectrum: its clear peaks inside the method's range and outside
 * the exclusion regions, each with the functional-group role that explains it when a rule found one. The
 * author accepts, edits or drops each row; nothing is added by itself.
 */
export function suggestBandRows(spectrum: Spectrum, content: SpecVersionContent) {
	const analysis = analyseSpectrum(spectrum)
	const roles = new Map<number, string>()
	for (const group of analysis.groups) {
		for (const item of group.evidence) {
			if (!roles.has(item.position)) roles.set(item.position, `${item.role} (${group.name.toLowerCase()})`)
		}
	}
	const excluded = (position: number) =>
		content.criteria.exclusionRegions.some((region) => position >= region.from && position <= region.to)
	const tolerance = (position: number) => bandTolerance({ position }, content.criteria.defaultBandTolerance)
	// Strongest first; a weaker peak within reach of a row already taken would make the table ambiguous.
	const taken: Array<{ position: number; relative: number; shape: 'broad' | 'sharp' }> = []
	for (const peak of [...analysis.peaks].sort((a, b) => b.relative - a.relative)) {
		if (peak.relative < SUGGESTED_BAND_MIN_RELATIVE) break
		if (peak.position < content.method.rangeFrom || peak.position > content.method.rangeTo || excluded(peak.position))
			continue
		if (
			taken.some((row) => Math.abs(row.position - peak.position) <= tolerance(row.position) + tolerance(peak.position))
		)
			continue
		taken.push(peak)
	}
	const rows = taken
		.sort((a, b) => b.position - a.position)
		.map((peak) => ({
			position: Math.round(peak.position),
			assignment: roles.get(Math.round(peak.position)) ?? '',
			intensityClass: intensityClassFor(peak.relative),
			shape: peak.shape,
			required: peak.relative >= 0.3,
			relative: Math.round(peak.relative * 100) / 100,
		}))
	return { rows, groups: analysis.groups, caveat: analysis.caveat }
}
