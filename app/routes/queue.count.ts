import type { Route } from './+types/queue.count'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listQueue } from '#app/.server/queries/queue.ts'
import type { QueueCount } from '#shared/queue/queue-count.ts'

/**
 * The sidebar's queue count as JSON, polled by the layout (QueueCountBadge). The layout's route policy marks this
 * route as background: polling it does not keep an idle session alive.
 */
export async function loader({ context }: Route.LoaderArgs) {
	const actor = authorize(context, 'queue:read')
	const body: QueueCount = { count: (await listQueue(db, actor)).length, at: new Date().toISOString() }
	return Response.json(body, { headers: { 'Cache-Control': 'no-store' } })
}
