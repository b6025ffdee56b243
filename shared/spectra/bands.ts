/**
 * Band-table matching: for each expected band the nearest sample peak within ± tolerance, its shift and its
 * relative intensity against the reference; and the strong sample peaks the reference lacks. Pure.
 */
import { bandTolerance, type BandSpec } from '#shared/spectra/criteria.ts'
import { nearestPeak, type Peak, type PeakShape } from '#shared/spectra/peaks.ts'

export type RelativeIntensity = {
	/** Height of the sample band relative to the strongest sample band (0–1), or null when not observed. */
	sample: number | null
	/** The same for the reference band, or null when the reference has no band there. */
	reference: number | null
	/** sample − reference, or null. */
	difference: number | null
}

export type BandMatch = {
	expected: {
		position: number
		tolerance: number
		assignment: string
		required: boolean
		intensityClass: BandSpec['intensityClass'] | null
		shape: PeakShape | null
	}
	/** Sample peak position in cm⁻¹, or null when no sample peak lies within the tolerance. */
	observed: number | null
	/** observed − expected position, cm⁻¹. */
	shift: number | null
	withinTolerance: boolean
	/** Reference peak position matched to the same expected band, or null. */
	reference: number | null
	relativeIntensity: RelativeIntensity
	/** Observed FWHM (cm⁻¹) and class of the sample peak. */
	width: number | null
	observedShape: PeakShape | null
	/** False when the band table names a shape and the sample peak has the other one. */
	shapeMatches: boolean | null
}

export type ExtraBand = {
	/** Sample peak position, cm⁻¹. */
	position: number
	relativeIntensity: number
	width: number
	shape: PeakShape
	/** Nearest reference peak, if any (outside the tolerance by construction). */
	nearestReference: number | null
}

/**
 * Relative intensities (0–1) of `peaks`: height above the lowest absorbance `floor` divided by that of the
 * strongest peak. `floor` is usually the spectrum's minimum over the compared range, which removes a constant
 * offset (e.g. scattering) from the ratio.
 */
export function relativeIntensities(peaks: ReadonlyArray<Peak>, floor: number): Map<Peak, number> {
	let strongest = 0
	for (const p of peaks) strongest = Math.max(strongest, p.intensity - floor)
	const out = new Map<Peak, number>()
	for (const p of peaks) out.set(p, strongest > 0 ? Math.max(0, p.intensity - floor) / strongest : 0)
	return out
}

export type MatchOptions = {
	/** ± cm⁻¹ for bands without their own tolerance; null = 0.5 % of the band position. */
	defaultTolerance: number | null
	/** Lowest absorbance of the sample / reference over the compared range (for relative intensities). */
	sampleFloor: number
	referenceFloor: number
}

/**
 * Match every expected band against the sample peaks (nearest within ±tolerance) and the reference peaks.
 * One result per expected band, in the order given. Pure.
 */
export function matchBands(
	bands: ReadonlyArray<BandSpec>,
	samplePeaks: ReadonlyArray<Peak>,
	referencePeaks: ReadonlyArray<Peak>,
	options: MatchOptions,
): Array<BandMatch> {
	const sampleRelative = relativeIntensities(samplePeaks, options.sampleFloor)
	const referenceRelative = relativeIntensities(referencePeaks, options.referenceFloor)
	return bands.map((band) => {
		const tolerance = bandTolerance(band, options.defaultTolerance)
		const sample = nearestPeak(samplePeaks, band.position, tolerance)
		const reference = nearestPeak(referencePeaks, band.position, tolerance)
		const s = sample ? sampleRelative.get(sample)! : null
		const r = reference ? referenceRelative.get(reference)! : null
		return {
			expected: {
				position: band.position,
				tolerance,
				assignment: band.assignment,
				required: band.required,
				intensityClass: band.intensityClass ?? null,
				shape: band.shape ?? null,
			},
			observed: sample ? sample.position : null,
			shift: sample ? sample.position - band.position : null,
			withinTolerance: sample !== null,
			reference: reference ? reference.position : null,
			relativeIntensity: { sample: s, reference: r, difference: s !== null && r !== null ? s - r : null },
			width: sample ? sample.width : null,
			observedShape: sample ? sample.shape : null,
			shapeMatches: sample && band.shape ? sample.shape === band.shape : null,
		}
	})
}

/**
 * Strong sample peaks (relative intensity ≥ `minRelativeIntensity`) with no reference peak within ±tolerance
 * (`tolerance`, or 0.5 % of the position when null). `isIncluded` filters out excluded regions. Sorted by
 * decreasing relative intensity.
 */
export function findExtraBands(
	samplePeaks: ReadonlyArray<Peak>,
	referencePeaks: ReadonlyArray<Peak>,
	options: {
		tolerance: number | null
		minRelativeIntensity: number
		sampleFloor: number
		isIncluded?: (position: number) => boolean
	},
): Array<ExtraBand> {
	const relative = relativeIntensities(samplePeaks, options.sampleFloor)
	const extras: Array<ExtraBand> = []
	for (const peak of samplePeaks) {
		const intensity = relative.get(peak)!
		if (intensity < options.minRelativeIntensity) continue
		if (options.isIncluded && !options.isIncluded(peak.position)) continue
		const tolerance = bandTolerance({ position: peak.position }, options.tolerance)
		if (nearestPeak(referencePeaks, peak.position, tolerance)) continue
		const nearest = nearestPeak(referencePeaks, peak.position, Infinity)
		extras.push({
			position: peak.position,
			relativeIntensity: intensity,
			width: peak.width,
			shape: peak.shape,
			nearestReference: nearest ? nearest.position : null,
		})
	}
	return extras.sort((a, b) => b.relativeIntensity - a.relativeIntensity)
}
