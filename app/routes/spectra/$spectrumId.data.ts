import { data } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/$spectrumId.data'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { loadSpectrum } from '#app/.server/services/spectra.ts'
import { thinForDisplay } from '#shared/spectra/thin.ts'

const DataQuerySchema = z.object({
	maxPoints: z.coerce.number().int().min(100).max(20_000).catch(4000),
	from: z.coerce.number().finite().optional().catch(undefined),
	to: z.coerce.number().finite().optional().catch(undefined),
})

/** A spectrum's data for the viewer: absorbance on ascending cm⁻¹, thinned so that peaks survive. */
export async function loader({ context, params, request }: Route.LoaderArgs) {
	authorize(context, 'spectrum:read')
	if (!z.uuid().safeParse(params.spectrumId).success) throw data({ message: 'No such spectrum.' }, { status: 404 })
	const stored = await loadSpectrum(db, params.spectrumId)
	if (!stored) throw data({ message: 'No such spectrum.' }, { status: 404 })
	const query = DataQuerySchema.parse(Object.fromEntries(new URL(request.url).searchParams))
	const thinned = thinForDisplay(stored.spectrum.x, stored.spectrum.y, query)
	return Response.json(
		{
			id: params.spectrumId,
			label: stored.fileName,
			unit: 'absorbance',
			points: stored.spectrum.x.length,
			x: thinned.x,
			y: thinned.y,
		},
		{ headers: { 'Cache-Control': 'private, max-age=300' } },
	)
}
