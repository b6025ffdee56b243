import { data } from 'react-router'
import type { Route } from './+types/band-suggestions'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getVersionWorkspace } from '#app/.server/queries/specifications.ts'
import { loadSpectrum } from '#app/.server/services/spectra.ts'
import { suggestBandRows } from '#app/.server/services/spectrum-analysis.ts'

/** Rows suggested from the version's saved reference spectrum, as JSON for the band-table editor. */
export async function loader({ context, params }: Route.LoaderArgs) {
	authorize(context, 'spec:edit')
	const workspace = await getVersionWorkspace(db, params.specId, params.versionId)
	if (!workspace) throw data({ message: 'No such version.' }, { status: 404 })
	if (!workspace.content.referenceSpectrumId) {
		return Response.json({
			rows: [],
			groups: [],
			caveat: '',
			message: 'Choose the reference spectrum and save the draft first.',
		})
	}
	const reference = await loadSpectrum(db, workspace.content.referenceSpectrumId)
	if (!reference) throw data({ message: 'The reference spectrum is missing.' }, { status: 404 })
	return Response.json({ ...suggestBandRows(reference.spectrum, workspace.content), message: null })
}
