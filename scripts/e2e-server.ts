/**
 * The server behind the end-to-end tests: its own PostgreSQL cluster (purpose 'e2e'), a fresh database
 * with the demo scenario, a fake SMTP server on a free port (unless SMTP_URL is set), and the production build on
 * 127.0.0.1:PORT. Stops everything on SIGTERM.
 */
import { spawn } from 'node:child_process'
import path from 'node:path'
import postgres from 'postgres'
import { startFakeSmtp } from './fake-smtp.ts'
import {
	databaseNameOf,
	ensureDatabase,
	projectRoot,
	runMigrations,
	startCluster,
	withDatabase,
} from './postgres-cluster.ts'

const port = Number(process.env.PORT ?? 4173)
const cluster = await startCluster({ purpose: 'e2e' })
const url = withDatabase(cluster.url, 'bandproof_e2e')

// A fresh database every run: the journeys expect exactly the demo scenario.
const admin = postgres(withDatabase(cluster.url, 'postgres'), { max: 1, onnotice: () => {} })
await admin.unsafe(`drop database if exists "${databaseNameOf(url)}" with (force)`)
await admin.end()
await ensureDatabase(url)
await runMigrations(url)
process.env.DATABASE_URL = url
const { db, closeDb } = await import('#app/.server/db/client.ts')
const { seedDemoScenario } = await import('./demo-scenario.ts')
await seedDemoScenario(db)
await closeDb()
const fakeSmtp = process.env.SMTP_URL ? null : await startFakeSmtp({ databaseUrl: url })

const server = spawn(path.join(projectRoot, 'node_modules/.bin/react-router-serve'), ['./build/server/index.js'], {
	cwd: projectRoot,
	stdio: 'inherit',
	env: {
		...process.env,
		NODE_ENV: 'production',
		BANDPROOF_DEMO: '1',
		DATABASE_URL: url,
		PORT: String(port),
		HOST: '127.0.0.1',
		...(fakeSmtp ? { SMTP_URL: fakeSmtp.url } : {}),
	},
})
let stopping = false
async function stop(code: number) {
	if (stopping) return
	stopping = true
	server.kill('SIGTERM')
	// react-router-serve outlives SIGTERM while its database connections are open (see scripts/start.ts).
	const killer = setTimeout(() => server.kill('SIGKILL'), 5000)
	await new Promise((resolve) => (server.exitCode !== null ? resolve(null) : server.once('exit', resolve)))
	clearTimeout(killer)
	await fakeSmtp?.stop()
	await cluster.stop()
	process.exit(code)
}
process.on('SIGTERM', () => void stop(0))
process.on('SIGINT', () => void stop(0))
server.on('exit', (code) => void stop(code ?? 0))
