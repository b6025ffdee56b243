import { data, redirect } from 'react-router'
import type { Route } from './+types/$specId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getLatestVersionId } from '#app/.server/queries/specifications.ts'

/** A specification's address opens its latest version. */
export async function loader({ context, params }: Route.LoaderArgs) {
	authorize(context, 'spec:read')
	const versionId = await getLatestVersionId(db, params.specId)
	if (!versionId) throw data({ message: 'There is no specification at this address.' }, { status: 404 })
	return redirect(`/specifications/${params.specId}/versions/${versionId}`)
}
