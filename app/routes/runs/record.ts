import { data } from 'react-router'
import { z } from 'zod'
import type { Route } from './+types/record'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { getRunRecord } from '#app/.server/services/run-records.ts'

const RunIdSchema = z.uuid()

/** The PDF record of an identity run, rendered at each download (with a NOT VERIFIED mark until verified); audited. */
export async function loader({ context, params, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'run:read')
	const runId = RunIdSchema.safeParse(params.runId)
	if (!runId.success) throw data({ message: 'No such identity run.' }, { status: 404 })
	const file = await getRunRecord(db, {
		actor,
		runId: runId.data,
		now: new Date(),
		ipAddress: clientAddress(request),
	})
	if (!file) throw data({ message: 'No such identity run.' }, { status: 404 })
	return new Response(new Uint8Array(file.bytes), {
		headers: {
			'Content-Type': 'application/pdf',
			'Content-Disposition': `attachment; filename="${file.fileName}"`,
			'X-Content-SHA256': file.sha256,
			'Cache-Control': 'private, no-store',
		},
	})
}
