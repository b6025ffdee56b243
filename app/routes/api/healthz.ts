import { sql } from 'drizzle-orm'
import { db } from '#app/.server/db/client.ts'

/** Liveness and database reachability, for load balancers and the test harness. */
export async function loader() {
	await db.execute(sql`select 1`)
	return Response.json({ status: 'ok' })
}
