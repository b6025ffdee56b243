/**
 * `npm run audit:verify`: checks the audit trail's hash chain of the app's database (or DATABASE_URL) and
 * exits 1 when any event's link or hash does not match.
 */
import { runMigrations, startCluster } from './postgres-cluster.ts'

const cluster = await startCluster({ purpose: 'app' })
let exitCode = 0
try {
	await runMigrations(cluster.url)
	process.env.DATABASE_URL = cluster.url
	const { db, closeDb } = await import('#app/.server/db/client.ts')
	const { verifyAuditChain } = await import('#app/.server/queries/audit-chain.ts')
	const { checked, breaks } = await verifyAuditChain(db)
	if (breaks.length === 0) {
		console.log(`Audit trail intact: ${checked} events, every hash and link matches.`)
	} else {
		exitCode = 1
		console.error(`Audit trail BROKEN at ${breaks.length} place(s) of ${checked} events:`)
		for (const item of breaks) console.error(`  event ${item.eventId}: ${item.problem}`)
	}
	await closeDb()
} finally {
	await cluster.stop()
}
process.exit(exitCode)
