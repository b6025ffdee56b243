/**
 * The dossier data model: the invented sample scenario validates, and figure series are thinned without losing peaks.
 */
import { expect, test } from 'vitest'
import { DossierDataSchema, type FigurePoint, MAX_FIGURE_POINTS, thinForFigure } from '#shared/dossier/model.ts'
import { sampleData } from '#tests/unit/dossier/support.ts'

test('the sample scenario validates, and optional facts come out as null rather than missing', () => {
	const data = DossierDataSchema.parse(sampleData())
	expect(data.document.number).toBe('CVP-QC-IR-0142')
	expect(data.document.material.casNumber).toBeNull()
	expect(data.signatures.map((signature) => signature.meaning)).toEqual(['authored', 'reviewed', 'approved'])
	expect(data.evidence[2]!.overlay).toBeNull()
	expect(data.referenceSpectrum!.points.length).toBeLessThanOrEqual(MAX_FIGURE_POINTS)
})

test('the schema refuses a malformed hash, a signature without a zone and an over-long series', () => {
	const data = sampleData()
	expect(DossierDataSchema.safeParse({ ...data, contentSha256: 'ABC' }).success).toBe(false)
	expect(
		DossierDataSchema.safeParse({ ...data, signatures: [{ ...data.signatures[0]!, signerTimeZone: '' }] }).success,
	).toBe(false)
	const long: Array<FigurePoint> = Array.from({ length: MAX_FIGURE_POINTS + 1 }, (_, i) => [4000 - i, 0])
	expect(
		DossierDataSchema.safeParse({ ...data, referenceSpectrum: { ...data.referenceSpectrum!, points: long } }).success,
	).toBe(false)
	expect(DossierDataSchema.safeParse({ ...data, renderedAt: 'yesterday' }).success).toBe(false)
})

test('thinning keeps at most the limit, both ends, and every narrow peak', () => {
	const points: Array<FigurePoint> = Array.from({ length: 20_000 }, (_, i) => [4000 - i * 0.1675, 0.01])
	for (const at of [1234, 9876, 15_000]) points[at] = [points[at]![0], 1.5] // one-point spikes
	const thinned = thinForFigure(points, 2000)
	expect(thinned.length).toBeLessThanOrEqual(2000)
	expect(thinned[0]).toEqual(points[0])
	expect(thinned[thinned.length - 1]).toEqual(points[points.length - 1])
	for (const at of [1234, 9876, 15_000]) expect(thinned).toContainEqual(points[at])
	// x order is preserved.
	expect(thinned.every((point, i) => i === 0 || point[0] < thinned[i - 1]![0])).toBe(true)
	expect(thinForFigure(points.slice(0, 10))).toEqual(points.slice(0, 10))
})
