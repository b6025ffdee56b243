import { spawn } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises'
import net from 'node:net'
import path from 'node:path'
import postgres from 'postgres'
import { afterEach, expect, test } from 'vitest'
import { projectRoot, runMigrations, startCluster, stopCluster, withDatabase } from '#scripts/postgres-cluster.ts'
import type { StartClusterOptions } from '#scripts/postgres-cluster.ts'

const quiet = { max: 1, onnotice: () => {} } as const
const cleanups: Array<() => Promise<void>> = []

afterEach(async () => {
	for (const cleanup of cleanups.splice(0).reverse()) await cleanup()
})

/** A throw-away cluster on a free port in a fresh folder under /tmp (reachable by the postgres user as root). */
async function scratchCluster(): Promise<StartClusterOptions & { clusterDir: string; port: number }> {
	const clusterDir = await mkdtemp('/tmp/bandproof-cluster-test-')
	const port = await freePort()
	cleanups.push(async () => {
		await stopCluster({ purpose: 'test', clusterDir }, () => {})
		await rm(clusterDir, { recursive: true, force: true })
	})
	// databaseUrl null: this file runs with DATABASE_URL pointing at its own test database.
	return { purpose: 'test', clusterDir, port, databaseUrl: null, log: () => {} }
}

function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const server = net.createServer()
		server.once('error', reject)
		server.listen(0, '127.0.0.1', () => {
			const address = server.address()
			server.close(() =>
				typeof address === 'object' && address ? resolve(address.port) : reject(new Error('no port')),
			)
		})
	})
}

function isListening(port: number): Promise<boolean> {
	return new Promise((resolve) => {
		const socket = net.connect({ port, host: '127.0.0.1' })
		socket.once('connect', () => {
			socket.destroy()
			resolve(true)
		})
		socket.once('error', () => resolve(false))
	})
}

async function waitUntilClosed(port: number): Promise<void> {
	const deadline = Date.now() + 10_000
	while (await isListening(port)) {
		if (Date.now() > deadline) throw new Error(`port ${port} still open`)
		await new Promise((resolve) => setTimeout(resolve, 50))
	}
}

async function postmasterPid(clusterDir: string): Promise<number> {
	return Number((await readFile(path.join(clusterDir, 'data', 'postmaster.pid'), 'utf8')).split('\n')[0])
}

function processExists(pid: number): boolean {
	try {
		// A zombie that nobody reaped (PID 1 in containers often does not) counts as gone.
		return !/^\S+ \(.*\) Z/.test(readFileSync(`/proc/${pid}/stat`, 'utf8'))
	} catch {
		return false
	}
}

test('a start after the server was killed with SIGKILL reuses the same cluster and its data', async () => {
	const options = await scratchCluster()
	const first = await startCluster(options)
	expect(first.startedHere).toBe(true)
	const sql = postgres(first.url, quiet)
	await sql`create table marker (note text)`
	await sql`insert into marker values ('kept')`
	await sql.end()
	const killed = await postmasterPid(options.clusterDir)
	process.kill(killed, 'SIGKILL')
	await waitUntilClosed(options.port)

	const second = await startCluster(options)
	expect(second.startedHere).toBe(true)
	expect(second.url).toBe(first.url)
	expect(await postmasterPid(options.clusterDir)).not.toBe(killed)
	const again = postgres(second.url, quiet)
	expect(await again`select note from marker`).toEqual([{ note: 'kept' }])
	await again.end()

	const pid = await postmasterPid(options.clusterDir)
	await second.stop()
	expect(await isListening(options.port)).toBe(false)
	expect(processExists(pid)).toBe(false)
})

test('stop() leaves nothing listening, and only once the last user of the cluster has left', async () => {
	const options = await scratchCluster()
	const owner = await startCluster(options)
	const joiner = await startCluster(options)
	expect(owner.startedHere).toBe(true)
	expect(joiner.startedHere).toBe(false)
	expect(joiner.url).toBe(owner.url)
	const pid = await postmasterPid(options.clusterDir)

	await owner.stop()
	expect(await isListening(options.port)).toBe(true)
	await joiner.stop()
	await joiner.stop() // idempotent
	expect(await isListening(options.port)).toBe(false)
	expect(processExists(pid)).toBe(false)
})

test('a server orphaned by a killed parent process is reused, then stopped by its new user', async () => {
	const options = await scratchCluster()
	const modulePath = path.join(projectRoot, 'scripts', 'postgres-cluster.ts')
	const program = `
		import { startCluster } from ${JSON.stringify(modulePath)}
		const cluster = await startCluster(${JSON.stringify({ ...options, log: undefined })})
		console.log('READY ' + cluster.url)
		setInterval(() => {}, 60_000)`
	const parent = spawn(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', program], {
		cwd: projectRoot,
		stdio: ['ignore', 'pipe', 'inherit'],
	})
	const url = await new Promise<string>((resolve, reject) => {
		let output = ''
		parent.stdout.on('data', (chunk: Buffer) => {
			output += chunk.toString()
			const match = /READY (\S+)/.exec(output)
			if (match?.[1]) resolve(match[1])
		})
		parent.once('exit', (code) => reject(new Error(`child exited early (${code})`)))
	})
	parent.kill('SIGKILL')
	await new Promise((resolve) => parent.once('exit', resolve))
	expect(await isListening(options.port)).toBe(true) // the server outlives its parent

	const lines: Array<string> = []
	const adopted = await startCluster({ ...options, log: (line) => lines.push(line) })
	expect(adopted.url).toBe(url)
	expect(adopted.startedHere).toBe(false)
	expect(lines.join('\n')).toMatch(/left running by an earlier process/)
	await adopted.stop()
	expect(await isListening(options.port)).toBe(false)
})

test('without PostgreSQL binaries the start fails with the command that installs them', async () => {
	const options = await scratchCluster()
	const nowhere = await mkdtemp('/tmp/bandproof-no-pg-')
	cleanups.push(() => rm(nowhere, { recursive: true, force: true }))
	const start = startCluster({
		...options,
		binarySearch: { pathDirs: [nowhere], pgConfig: null, versionRoots: [nowhere] },
	})
	await expect(start).rejects.toThrow(/apt-get install -y postgresql/)
	expect(await isListening(options.port)).toBe(false)
})

test('with DATABASE_URL set no cluster is started and no binaries are needed', async () => {
	const url = process.env.DATABASE_URL
	expect(url).toBeTruthy()
	const cluster = await startCluster({
		purpose: 'app',
		databaseUrl: url,
		log: () => {},
		binarySearch: { pathDirs: [], pgConfig: null, versionRoots: [] },
	})
	expect(cluster).toMatchObject({ url, startedHere: false, port: null, clusterDir: null })
	await cluster.stop()
})

test('runMigrations skips a missing migrations folder and applies a Drizzle journal once', async () => {
	const url = process.env.DATABASE_URL ?? ''
	const folder = await mkdtemp('/tmp/bandproof-migrations-')
	cleanups.push(() => rm(folder, { recursive: true, force: true }))
	await expect(
		runMigrations(url, { migrationsFolder: path.join(folder, 'absent'), log: () => {} }),
	).resolves.toBeUndefined()

	await mkdir(path.join(folder, 'meta'))
	const entry = { idx: 0, version: '7', when: 1_700_000_000_000, tag: '0000_probe', breakpoints: true }
	await writeFile(
		path.join(folder, 'meta', '_journal.json'),
		JSON.stringify({ version: '7', dialect: 'postgresql', entries: [entry] }),
	)
	await writeFile(
		path.join(folder, '0000_probe.sql'),
		'CREATE TABLE "probe_items" ("id" serial PRIMARY KEY);\n--> statement-breakpoint\nINSERT INTO "probe_items" DEFAULT VALUES;',
	)
	const scratchDb = withDatabase(url, `${new URL(url).pathname.slice(1)}_probe`)
	const admin = postgres(url, quiet)
	await admin`drop database if exists ${admin(new URL(scratchDb).pathname.slice(1))}`
	await admin`create database ${admin(new URL(scratchDb).pathname.slice(1))}`
	cleanups.push(async () => {
		await admin`drop database if exists ${admin(new URL(scratchDb).pathname.slice(1))} with (force)`
		await admin.end()
	})

	await runMigrations(scratchDb, { migrationsFolder: folder, log: () => {} })
	await runMigrations(scratchDb, { migrationsFolder: folder, log: () => {} })
	const sql = postgres(scratchDb, quiet)
	expect(await sql`select count(*)::int as n from probe_items`).toEqual([{ n: 1 }])
	await sql.end()
})
