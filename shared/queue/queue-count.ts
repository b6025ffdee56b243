import { z } from 'zod'

/**
 * How many tasks wait in a person's queue, and when the server counted them: what the layout loader and the
 * /queue/count resource route answer, so the sidebar can keep whichever is newer.
 */
export const QueueCountSchema = z.object({ count: z.number().int().min(0), at: z.iso.datetime() })
export type QueueCount = z.infer<typeof QueueCountSchema>

/** The newer of two counts (by the server's time of counting); the first when they tie. */
export function newerQueueCount(a: QueueCount, b: QueueCount | null): QueueCount {
	return b && Date.parse(b.at) > Date.parse(a.at) ? b : a
}
