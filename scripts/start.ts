/**
 * `npm start`: brings up the project's own PostgreSQL (or uses DATABASE_URL), migrates, seeds the demo
 * scenario into an empty database, serves the production build on 127.0.0.1:PORT, and stops the database
 * again when the server ends. Without SMTP_URL, a local fake SMTP server (scripts/fake-smtp.ts) receives the mail.
 */
import { spawn } from 'node:child_process'
import path from 'node:path'
import { type FakeSmtp, startFakeSmtp } from './fake-smtp.ts'
import { projectRoot, runMigrations, startCluster } from './postgres-cluster.ts'

const port = Number(process.env.PORT ?? 3000)
const host = process.env.HOST ?? '127.0.0.1'

const cluster = await startCluster({ purpose: 'app' })
let fakeSmtp: FakeSmtp | null = null
let stopping = false
async function shutdown(code: number): Promise<never> {
	if (!stopping) {
		stopping = true
		await fakeSmtp?.stop()
		await cluster.stop()
	}
	process.exit(code)
}

try {
	await runMigrations(cluster.url)
	process.env.DATABASE_URL = cluster.url
	const { db, closeDb } = await import('#app/.server/db/client.ts')
	const { seedDemoScenario } = await import('./demo-scenario.ts')
	const { seeded } = await seedDemoScenario(db)
	console.log(
		seeded
			? 'Seeded the demo scenario (Calder Vale Pharmaceuticals).'
			: 'Database already holds data; demo seeding skipped.',
	)
	await closeDb()
	if (!process.env.SMTP_URL) {
		fakeSmtp = await startFakeSmtp({ databaseUrl: cluster.url })
		console.log(
			`No SMTP_URL: mail goes to the local fake mail server on ${fakeSmtp.url} (Administration → Outgoing mail).`,
		)
	}
} catch (error) {
	console.error(error instanceof Error ? error.message : error)
	await shutdown(1)
}

const publicUrl = process.env.BETTER_AUTH_URL ?? `http://${host === '127.0.0.1' ? 'localhost' : host}:${port}`
const server = spawn(path.join(projectRoot, 'node_modules/.bin/react-router-serve'), ['./build/server/index.js'], {
	cwd: projectRoot,
	stdio: 'inherit',
	env: {
		...process.env,
		NODE_ENV: 'production',
		BANDPROOF_DEMO: process.env.BANDPROOF_DEMO ?? '1',
		DATABASE_URL: cluster.url,
		PORT: String(port),
		HOST: host,
		BETTER_AUTH_URL: publicUrl,
		...(fakeSmtp ? { SMTP_URL: fakeSmtp.url } : {}),
	},
})
console.log(`Bandproof is starting on ${publicUrl} (demo password: see README).`)
// NOTE: react-router-serve closes its listener on SIGTERM but its open database connections keep the process alive,
// so after a grace period it is killed; the cluster then stops in shutdown().
const SERVER_STOP_GRACE_MS = 5000
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
	process.on(signal, () => {
		server.kill(signal)
		setTimeout(() => server.kill('SIGKILL'), SERVER_STOP_GRACE_MS).unref()
	})
}
server.on('exit', (code) => {
	void shutdown(code ?? 0)
})
