import { ApiProblem } from '#app/.server/problem.ts'
import { apiRoute, notFound, uuidParam } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { getEffectiveVersion, getSpecificationWithVersions } from '#app/.server/queries/api.ts'
import { loadSpectrum } from '#app/.server/services/spectra.ts'
import { CompareRequestSchema } from '#shared/api/v1.ts'
import { toAcceptanceCriteria } from '#shared/specs/version-content.ts'
import { compareSpectra } from '#shared/spectra/compare.ts'
import { AcceptanceCriteriaSchema } from '#shared/spectra/criteria.ts'

// Compares a stored spectrum with the reference of the specification's EFFECTIVE version under that version's
// criteria, as recordComparison does for drafts, but keeps nothing: the caller gets the verdict.
export const action = apiRoute(
	{ scope: 'write', permission: 'spec:read', body: CompareRequestSchema },
	async ({ params, body }) => {
		const id = uuidParam(params, 'specificationId', 'The specification')
		const version = await getEffectiveVersion(db, id)
		if (!version) {
			if (!(await getSpecificationWithVersions(db, id))) notFound('The specification')
			throw new ApiProblem(409, 'This specification has no effective version to compare against.')
		}
		const referenceId = version.content.referenceSpectrumId
		if (!referenceId) throw new ApiProblem(409, 'The effective version has no reference spectrum.')
		const [reference, sample] = await Promise.all([
			loadSpectrum(db, referenceId),
			loadSpectrum(db, body.sampleSpectrumId),
		])
		if (!reference) notFound('The reference spectrum')
		if (!sample) notFound('The spectrum to compare')
		const criteria = AcceptanceCriteriaSchema.parse(toAcceptanceCriteria(version.content))
		const comparison = compareSpectra(reference.spectrum, sample.spectrum, criteria)
		return Response.json({
			specificationId: id,
			versionId: version.id,
			verdict: comparison.verdict,
			correlation: comparison.correlation,
			derivativeCorrelation: comparison.derivativeCorrelation,
			reasons: comparison.reasons,
			bands: comparison.bands.map((band) => ({
				expected: {
					position: band.expected.position,
					tolerance: band.expected.tolerance,
					assignment: band.expected.assignment,
					required: band.expected.required,
				},
				observed: band.observed,
				shift: band.shift,
				withinTolerance: band.withinTolerance,
			})),
			algorithmVersion: comparison.algorithmVersion,
		})
	},
)
