/**
 * Load test over loopback: the production build served by react-router-serve, as `npm start` serves it, against
 * its own database `bandproof_bench` on the project's app cluster (the demo database `bandproof` is never touched),
 * seeded with 10,000 specifications through bulk inserts into the real schema.
 *
 * autocannon drives each target for a few seconds after a short warm-up: the library list (/specifications) as a
 * signed-in lab user with a session cookie, one API read (GET /api/v1/specifications/{id}) with an API key, and a
 * static asset of the same server (express.static in react-router-serve, no app code). Each route is reported with its
 * ratio to the static asset measured in the same run, so the numbers mean something on any machine.
 *
 * `npm run bench -- load`; BENCH_LOAD_SECONDS (default 5) and BENCH_LOAD_CONNECTIONS (default 10) adjust it.
 */
import { type ChildProcess, spawn } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { existsSync, readdirSync, statSync } from 'node:fs'
import net from 'node:net'
import path from 'node:path'
import autocannon from 'autocannon'
import postgres from 'postgres'
import { z } from 'zod'
import { databaseNameOf, projectRoot, runMigrations, startCluster, withDatabase } from '#scripts/postgres-cluster.ts'
import type { VersionState } from '#shared/specs/state-labels.ts'
import { emptyVersionContent, type SpecVersionContent } from '#shared/specs/version-content.ts'

export type BenchTable = { columns: Array<string>; rows: Array<Array<string>>; notes: Array<string> }

const SPECIFICATION_COUNT = 10_000
const MATERIAL_COUNT = 400
// Five owners against six states: every owner holds specifications in every state, drafts for their queue included.
const OWNER_COUNT = 5
const BENCH_DATABASE = 'bandproof_bench'
const PASSWORD = 'bench-password-not-secret'

const SettingsSchema = z.object({
	BENCH_LOAD_SECONDS: z.coerce.number().int().min(1).max(120).default(5),
	BENCH_LOAD_CONNECTIONS: z.coerce.number().int().min(1).max(200).default(10),
})

type Target = { name: string; path: string; headers: Record<string, string> }
type Measured = {
	target: Target
	requestsPerSecond: number
	p95Ms: number
	requests: number
	failures: number
	bytes: number
}

function log(line: string) {
	process.stderr.write(`[load] ${line}\n`)
}

/** Runs a command in the project; its output is shown only when it fails. */
async function run(command: string, args: Array<string>): Promise<void> {
	const child = spawn(command, args, { cwd: projectRoot, stdio: ['ignore', 'pipe', 'pipe'] })
	const output: Array<Buffer> = []
	child.stdout.on('data', (chunk: Buffer) => output.push(chunk))
	child.stderr.on('data', (chunk: Buffer) => output.push(chunk))
	const code = await new Promise<number | null>((resolve) => child.on('exit', resolve))
	if (code !== 0) {
		process.stderr.write(Buffer.concat(output))
		throw new Error(`${path.basename(command)} ${args.join(' ')} failed with exit code ${code}`)
	}
}

async function freePort(): Promise<number> {
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

/** The specifications' versions: most have one, every fifth a superseded first and a current second. */
function versionPlan(index: number): Array<{ versionNumber: number; state: VersionState }> {
	const latest: Array<VersionState> = ['effective', 'effective', 'draft', 'in_review', 'approved', 'retired']
	const state = latest[index % latest.length]!
	if (index % 5 === 0)
		return [
			{ versionNumber: 1, state: 'superseded' },
			{ versionNumber: 2, state },
		]
	return [{ versionNumber: 1, state }]
}

function benchContent(index: number): SpecVersionContent {
	const content = emptyVersionContent()
	content.scope = `Identity test by FTIR for incoming lots of bench material ${(index % MATERIAL_COUNT) + 1}.`
	content.bands = [3300, 2950, 1735, 1600, 1240, 1050].map((position, row) => ({
		id: `band-${row + 1}`,
		position: position - (index % 7),
		tolerance: null,
		assignment: `Band ${row + 1}`,
		intensityClass: 'm',
		shape: 'sharp',
		required: row < 3,
	}))
	return content
}

/** 10,000 specifications with their versions, by bulk inserts through Drizzle into the real tables. */
export async function seedBenchData(
	databaseUrl: string,
): Promise<{ email: string; token: string; specificationId: string }> {
	process.env.DATABASE_URL = databaseUrl
	const { db, closeDb } = await import('#app/.server/db/client.ts')
	const { materials } = await import('#app/.server/db/schema/materials.ts')
	const { specifications, specVersions } = await import('#app/.server/db/schema/specifications.ts')
	const { SYSTEM_ACTOR } = await import('#app/.server/services/audit.ts')
	const { createUser } = await import('#app/.server/services/users.ts')
	const { createApiKey } = await import('#app/.server/services/api-keys.ts')
	try {
		const now = new Date()
		const owners: Array<{ id: string; name: string; email: string }> = []
		for (let n = 1; n <= OWNER_COUNT; n++) {
			const values = {
				name: `Bench Analyst ${n}`,
				email: `bench-${n}@bandproof.test`,
				password: PASSWORD,
				roles: ['author' as const],
				timeZone: 'UTC',
			}
			const created = await createUser(db, { actor: SYSTEM_ACTOR, values, now })
			if (!created.ok) throw created.error
			owners.push({ id: created.value.id, name: values.name, email: values.email })
		}
		const lab = owners[0]!
		const key = await createApiKey(db, {
			actor: { ...lab, roles: ['author'] },
			name: 'load benchmark',
			scopes: ['read'],
			now,
		})
		if (!key.ok) throw key.error

		const materialRows = Array.from({ length: MATERIAL_COUNT }, (_, i) => ({
			id: crypto.randomUUID(),
			code: `RM-B${String(i + 1).padStart(4, '0')}`,
			name: `Bench material ${i + 1}`,
			createdBy: lab.id,
			updatedBy: lab.id,
		}))
		await db.insert(materials).values(materialRows)

		const specRows = Array.from({ length: SPECIFICATION_COUNT }, (_, i) => ({
			id: crypto.randomUUID(),
			documentNumber: `QC-IR-B${String(i + 1).padStart(5, '0')}`,
			title: `Identity of bench material ${(i % MATERIAL_COUNT) + 1} by FTIR`,
			materialId: materialRows[i % MATERIAL_COUNT]!.id,
			ownerId: owners[i % OWNER_COUNT]!.id,
		}))
		const versionRows = specRows.flatMap((spec, i) =>
			versionPlan(i).map(({ versionNumber, state }) => {
				const owner = owners[i % OWNER_COUNT]!
				const settled = state !== 'draft' && state !== 'in_review'
				return {
					specificationId: spec.id,
					versionNumber,
					state,
					content: benchContent(i),
					authorId: owner.id,
					editorIds: [owner.id],
					lockedAt: settled ? now : null,
					effectiveAt: ['effective', 'superseded', 'retired'].includes(state) ? now : null,
				}
			}),
		)
		// Chunks keep each statement well under PostgreSQL's 65,535 bind parameters.
		for (let start = 0; start < specRows.length; start += 1_000)
			await db.insert(specifications).values(specRows.slice(start, start + 1_000))
		for (let start = 0; start < versionRows.length; start += 1_000)
			await db.insert(specVersions).values(versionRows.slice(start, start + 1_000))
		log(`seeded ${specRows.length} specifications, ${versionRows.length} versions, ${materialRows.length} materials`)
		return { email: lab.email, token: key.value.token, specificationId: specRows[SPECIFICATION_COUNT / 2]!.id }
	} finally {
		await closeDb()
	}
}

/**
 * SIGTERM, then SIGKILL after five seconds: react-router-serve only closes its listener on SIGTERM, and the app's
 * background timers (mail worker, effective dates) keep the process alive after that.
 */
async function stopServer(server: ChildProcess): Promise<void> {
	if (server.exitCode !== null || server.signalCode !== null) return
	const exited = new Promise((resolve) => server.once('exit', resolve))
	server.kill('SIGTERM')
	const timer = setTimeout(() => server.kill('SIGKILL'), 5_000)
	await exited
	clearTimeout(timer)
}

/**
 * Waits until the server has finished the requests autocannon left in flight when it stopped (they would otherwise
 * be served during the next target's run): /healthz, which asks the database, answers quickly again.
 */
async function settle(baseUrl: string): Promise<void> {
	const deadline = Date.now() + 60_000
	while (Date.now() < deadline) {
		const start = performance.now()
		const ok = await fetch(`${baseUrl}/healthz`)
			.then((response) => response.ok)
			.catch(() => false)
		if (ok && performance.now() - start < 50) return
		await new Promise((resolve) => setTimeout(resolve, 200))
	}
}

async function waitForServer(baseUrl: string, server: ChildProcess): Promise<void> {
	const deadline = Date.now() + 60_000
	while (Date.now() < deadline) {
		if (server.exitCode !== null) throw new Error(`the server exited with code ${server.exitCode}`)
		const ok = await fetch(`${baseUrl}/healthz`)
			.then((response) => response.ok)
			.catch(() => false)
		if (ok) return
		await new Promise((resolve) => setTimeout(resolve, 250))
	}
	throw new Error('the server did not answer /healthz within 60 s')
}

/** Signs in through better-auth's endpoint, as the sign-in page does, and returns the Cookie header to send. */
async function signIn(baseUrl: string, email: string): Promise<string> {
	const response = await fetch(`${baseUrl}/api/auth/sign-in/email`, {
		method: 'POST',
		headers: { 'Content-Type': 'application/json', Origin: baseUrl },
		body: JSON.stringify({ email, password: PASSWORD }),
	})
	if (!response.ok) throw new Error(`sign-in failed with ${response.status}: ${await response.text()}`)
	const cookies = response.headers.getSetCookie().map((line) => line.split(';')[0]!)
	if (cookies.length === 0) throw new Error('sign-in set no cookie')
	return cookies.join('; ')
}

/** The smallest file under build/client/assets: the cheapest thing the server can answer. */
function smallestAsset(): string {
	const folder = path.join(projectRoot, 'build/client/assets')
	const [smallest] = readdirSync(folder)
		.map((name) => ({ name, size: statSync(path.join(folder, name)).size }))
		.sort((a, b) => a.size - b.size)
	if (!smallest) throw new Error('build/client/assets is empty')
	return `/assets/${smallest.name}`
}

/** One request before the load: each target must answer 200 with what it should, or the numbers would mean nothing. */
async function check(baseUrl: string, target: Target, expect: (body: string) => string | null): Promise<void> {
	const response = await fetch(`${baseUrl}${target.path}`, { headers: target.headers, redirect: 'manual' })
	const body = await response.text()
	const problem = response.status === 200 ? expect(body) : `answered ${response.status}`
	if (problem) throw new Error(`${target.name} (${target.path}): ${problem}`)
}

async function measure(baseUrl: string, target: Target, seconds: number, connections: number): Promise<Measured> {
	const options = { url: `${baseUrl}${target.path}`, headers: target.headers, connections }
	await autocannon({ ...options, duration: 1 }) // warm-up: JIT, connection pools, caches
	await settle(baseUrl)
	const latencies: Array<number> = []
	let failures = 0
	const result = await new Promise<autocannon.Result>((resolve, reject) => {
		const instance = autocannon({ ...options, duration: seconds }, (error: unknown, done: autocannon.Result) =>
			error ? reject(error instanceof Error ? error : new Error(String(error))) : resolve(done),
		)
		instance.on('response', (_client, statusCode, _bytes, responseTime) => {
			latencies.push(responseTime)
			if (statusCode !== 200) failures += 1
		})
	})
	latencies.sort((a, b) => a - b)
	// p95 by the nearest-rank method over every response (autocannon's own histogram stops at p90 and p97.5).
	const p95Ms = latencies.length ? latencies[Math.ceil(0.95 * latencies.length) - 1]! : Number.NaN
	return {
		target,
		requestsPerSecond: result.requests.total / result.duration,
		p95Ms,
		requests: result.requests.total,
		failures: failures + result.errors,
		bytes: result.requests.total ? result.throughput.total / result.requests.total : 0,
	}
}

export async function benchLoad(): Promise<BenchTable> {
	const settings = SettingsSchema.parse(process.env)
	log('building the production bundle (react-router build)')
	await run(path.join(projectRoot, 'node_modules/.bin/react-router'), ['build'])
	if (!existsSync(path.join(projectRoot, 'build/server/index.js'))) throw new Error('the build left no server bundle')

	// Our own cluster even when DATABASE_URL is set: the bench drops and creates its database.
	const cluster = await startCluster({ purpose: 'app', database: BENCH_DATABASE, databaseUrl: null })
	let server: ChildProcess | null = null
	try {
		const admin = postgres(withDatabase(cluster.url, 'postgres'), { max: 1, onnotice: () => {} })
		try {
			await admin.unsafe(`drop database if exists "${databaseNameOf(cluster.url)}" with (force)`)
			await admin.unsafe(`create database "${databaseNameOf(cluster.url)}"`)
		} finally {
			await admin.end({ timeout: 5 })
		}
		await runMigrations(cluster.url)
		const seeded = await seedBenchData(cluster.url)

		const port = await freePort()
		const baseUrl = `http://127.0.0.1:${port}`
		server = spawn(path.join(projectRoot, 'node_modules/.bin/react-router-serve'), ['./build/server/index.js'], {
			cwd: projectRoot,
			stdio: ['ignore', 'ignore', 'inherit'],
			env: {
				...process.env,
				NODE_ENV: 'production',
				DATABASE_URL: cluster.url,
				PORT: String(port),
				HOST: '127.0.0.1',
				BETTER_AUTH_URL: baseUrl,
				BETTER_AUTH_SECRET: randomBytes(32).toString('hex'),
				// One key makes every API request of the run: far past the default limit of 120 a minute.
				API_RATE_LIMIT_PER_KEY: '1000000000',
			},
		})
		await waitForServer(baseUrl, server)
		const cookie = await signIn(baseUrl, seeded.email)

		const staticAsset: Target = { name: 'static asset', path: smallestAsset(), headers: {} }
		const list: Target = { name: 'library list (signed in)', path: '/specifications', headers: { Cookie: cookie } }
		const apiRead: Target = {
			name: 'API read (API key)',
			path: `/api/v1/specifications/${seeded.specificationId}`,
			headers: { Authorization: `Bearer ${seeded.token}` },
		}
		await check(baseUrl, staticAsset, () => null)
		await check(baseUrl, list, (html) => {
			// One page of the list, not 10,000 rows: the pager names the total (React separates text parts by comments).
			const rows = html.match(/href="\/specifications\/[0-9a-f-]{36}\/versions\//g)?.length ?? 0
			const pager = html.replaceAll('<!-- -->', '').includes(`${SPECIFICATION_COUNT} specifications · page 1 of`)
			return rows > 0 && rows <= 100 && pager ? null : `expected one page of ${SPECIFICATION_COUNT}, saw ${rows} rows`
		})
		await check(baseUrl, apiRead, (json) =>
			json.includes(seeded.specificationId) ? null : 'the answer does not name the specification',
		)

		const measured: Array<Measured> = []
		for (const target of [staticAsset, list, apiRead]) {
			log(`${target.name}: ${settings.BENCH_LOAD_SECONDS} s, ${settings.BENCH_LOAD_CONNECTIONS} connections`)
			measured.push(await measure(baseUrl, target, settings.BENCH_LOAD_SECONDS, settings.BENCH_LOAD_CONNECTIONS))
			await settle(baseUrl)
		}
		const floor = measured[0]!
		return {
			columns: ['target', 'path', 'req/s', 'p95 ms', 'req/s vs static', 'p95 vs static', 'bytes/resp', 'non-200'],
			rows: measured.map((m) => [
				m.target.name,
				m.target.path.length > 40 ? `${m.target.path.slice(0, 37)}…` : m.target.path,
				m.requestsPerSecond.toFixed(0),
				m.p95Ms.toFixed(1),
				m === floor ? '1' : (m.requestsPerSecond / floor.requestsPerSecond).toFixed(3),
				m === floor ? '1' : `${(m.p95Ms / floor.p95Ms).toFixed(1)}×`,
				m.bytes.toFixed(0),
				String(m.failures),
			]),
			notes: [
				`${SPECIFICATION_COUNT.toLocaleString('en')} specifications; ${settings.BENCH_LOAD_SECONDS} s per target after a 1 s warm-up, ${settings.BENCH_LOAD_CONNECTIONS} connections, loopback, one server process.`,
				'"vs static": requests per second as a fraction of the static asset\'s, and p95 latency as a multiple of its p95.',
			],
		}
	} finally {
		if (server) await stopServer(server)
		const admin = postgres(withDatabase(cluster.url, 'postgres'), { max: 1, onnotice: () => {} })
		await admin
			.unsafe(`drop database if exists "${databaseNameOf(cluster.url)}" with (force)`)
			.catch(() => undefined)
			.finally(() => admin.end({ timeout: 5 }))
		await cluster.stop()
	}
}
