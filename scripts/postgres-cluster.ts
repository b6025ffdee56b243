/**
 * The project's own PostgreSQL for development, tests and end-to-end runs.
 *
 * One module serves `npm start`, the dev server and the test runs: it finds Debian's server binaries, creates a
 * cluster on first use (one per purpose, each with its own data folder and port), starts it on 127.0.0.1 only,
 * creates the application database, runs the Drizzle migrations and stops the server when its last user leaves.
 *
 * NOTE: clusters made here use `trust` authentication on loopback, which is only acceptable for development and
 * tests. Production never comes through here: it sets DATABASE_URL to a managed server with real credentials.
 */
import { execFile, spawn } from 'node:child_process'
import { createHash, randomUUID } from 'node:crypto'
import { existsSync, constants as fsConstants, readFileSync, realpathSync } from 'node:fs'
import {
	access,
	chmod,
	chown,
	mkdir,
	open,
	readdir,
	readFile,
	realpath,
	rename,
	rm,
	rmdir,
	stat,
	writeFile,
} from 'node:fs/promises'
import net from 'node:net'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { drizzle } from 'drizzle-orm/postgres-js'
import { migrate } from 'drizzle-orm/postgres-js/migrator'
import postgres from 'postgres'

export type ClusterPurpose = 'app' | 'test' | 'e2e'

/** Where to look for the server binaries; injectable so that tests can simulate a machine without them. */
export type BinarySearch = {
	/** Directories searched in order, like PATH. */
	pathDirs: ReadonlyArray<string>
	/** The pg_config to ask for `--bindir`; null skips that question. */
	pgConfig: string | null
	/** Folders holding one sub-folder per major version with a `bin/` inside (Debian: /usr/lib/postgresql). */
	versionRoots: ReadonlyArray<string>
}

export type StartClusterOptions = {
	purpose: ClusterPurpose
	/** TCP port on 127.0.0.1; defaults to the purpose's env override, then its fixed default. */
	port?: number
	/** Folder holding the cluster (data/, server.log); defaults per purpose and per user (root or not). */
	clusterDir?: string
	/** Database created and returned in `url`; default 'bandproof'. */
	database?: string
	/** An existing server to use instead of a cluster. undefined: read DATABASE_URL; null: ignore DATABASE_URL. */
	databaseUrl?: string | null
	binarySearch?: BinarySearch
	/** Keep the server running after every user has left (the CLI's `start`). */
	detached?: boolean
	/** Receives progress lines; default writes them to stderr. */
	log?: (line: string) => void
	/** How long to wait for the server to accept connections, in milliseconds; default 60 000. */
	timeoutMs?: number
}

export type Cluster = {
	/** Connection URL of the application database (postgres.js / libpq form). */
	url: string
	/** Port of the cluster; null when DATABASE_URL pointed elsewhere. */
	port: number | null
	/** Folder of the cluster; null when DATABASE_URL pointed elsewhere. */
	clusterDir: string | null
	/** True when this call launched the server process (false when it joined a running one or used DATABASE_URL). */
	startedHere: boolean
	/** Leave the cluster: the server stops (pg_ctl stop -m fast) once its last user has left. Safe to call twice. */
	stop: () => Promise<void>
}

export class PostgresNotFoundError extends Error {
	constructor(searched: ReadonlyArray<string>) {
		super(
			[
				'PostgreSQL server binaries (initdb, pg_ctl, postgres) were not found.',
				`Looked in: ${searched.length > 0 ? searched.join(', ') : '(nowhere)'}.`,
				"Install Debian's server package: `apt-get update && apt-get install -y postgresql` (prefix with sudo",
				'when not root), or set DATABASE_URL to use an existing PostgreSQL server instead.',
			].join('\n'),
		)
		this.name = 'PostgresNotFoundError'
	}
}

export const projectRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..')

const defaultPorts = { app: 54329, test: 54339, e2e: 54349 } as const satisfies Record<ClusterPurpose, number>
const portEnvNames = {
	app: 'BANDPROOF_PG_PORT',
	test: 'BANDPROOF_TEST_PG_PORT',
	e2e: 'BANDPROOF_E2E_PG_PORT',
} as const satisfies Record<ClusterPurpose, string>
const purposes: ReadonlyArray<ClusterPurpose> = ['app', 'test', 'e2e']

/** OS account that runs the server when we are root (PostgreSQL refuses to run as root). */
const serverOsUser = 'postgres'
/** Superuser role created by initdb; the same name whoever runs initdb, so URLs do not depend on the OS user. */
const superuserRole = 'postgres'
const defaultDatabase = 'bandproof'
const defaultTimeoutMs = 60_000
/** Arbitrary key for pg_advisory_lock so that two processes never run the migrations at the same time. */
const migrationLockKey = 4_210_779_311
const quietClient = { max: 1, onnotice: () => {}, connect_timeout: 5 } as const

function defaultLog(line: string): void {
	process.stderr.write(`[postgres] ${line}\n`)
}

function isRoot(): boolean {
	return process.getuid?.() === 0
}

function shortHash(text: string): string {
	return createHash('sha256').update(text).digest('hex').slice(0, 12)
}

export function isClusterPurpose(value: unknown): value is ClusterPurpose {
	return typeof value === 'string' && (purposes as ReadonlyArray<string>).includes(value)
}

/** Port for a purpose: explicit value, else its env override (e.g. BANDPROOF_PG_PORT for 'app'), else the default. */
export function resolvePort(purpose: ClusterPurpose, explicit?: number): number {
	const envName = portEnvNames[purpose]
	const raw = explicit ?? process.env[envName]
	if (raw === undefined || raw === '') return defaultPorts[purpose]
	const port = Number(raw)
	if (!Number.isInteger(port) || port < 1 || port > 65_535)
		throw new Error(`${envName} must be a TCP port, got "${raw}"`)
	return port
}

/**
 * As a normal user the cluster lives in the checkout's git-ignored `.data/`. As root it must not: a checkout under a
 * mode-700 home (/root) is unreachable by the postgres user, so it goes under /tmp, keyed by the checkout's path.
 */
export function defaultClusterDir(purpose: ClusterPurpose): string {
	if (isRoot()) return path.join('/tmp', `bandproof-pg-${shortHash(projectRoot)}-${purpose}`)
	return path.join(projectRoot, '.data', `postgres-${purpose}`)
}

/** URL of a database on the same server as `url`. */
export function withDatabase(url: string, database: string): string {
	const parsed = new URL(url)
	parsed.pathname = `/${encodeURIComponent(database)}`
	return parsed.toString()
}

export function databaseNameOf(url: string): string {
	const name = decodeURIComponent(new URL(url).pathname.replace(/^\//, ''))
	if (name === '') throw new Error(`The database URL names no database: ${redact(url)}`)
	return name
}

function redact(url: string): string {
	try {
		const parsed = new URL(url)
		if (parsed.password) parsed.password = '***'
		return parsed.toString()
	} catch {
		return '(unparseable URL)'
	}
}

function clusterUrl(port: number, database: string): string {
	return `postgres://${superuserRole}@127.0.0.1:${port}/${encodeURIComponent(database)}`
}

function pgErrorCode(error: unknown): string | null {
	if (typeof error === 'object' && error !== null && 'code' in error) return String(error.code)
	return null
}

function sleep(ms: number): Promise<void> {
	return new Promise((resolve) => setTimeout(resolve, ms))
}

// ---------------------------------------------------------------------------------------------------------------
// Finding the binaries

export function defaultBinarySearch(): BinarySearch {
	return {
		pathDirs: (process.env.PATH ?? '').split(path.delimiter).filter((dir) => dir !== ''),
		pgConfig: 'pg_config',
		versionRoots: ['/usr/lib/postgresql'],
	}
}

async function isExecutable(file: string): Promise<boolean> {
	try {
		await access(file, fsConstants.X_OK)
		return (await stat(file)).isFile()
	} catch {
		return false
	}
}

async function isServerBindir(dir: string): Promise<boolean> {
	for (const name of ['initdb', 'pg_ctl', 'postgres']) {
		if (!(await isExecutable(path.join(dir, name)))) return false
	}
	return true
}

function capture(command: string, args: ReadonlyArray<string>): Promise<string | null> {
	return new Promise((resolve) => {
		execFile(command, args, { timeout: 5_000 }, (error, stdout) => resolve(error ? null : stdout.trim()))
	})
}

/**
 * Directory holding initdb, pg_ctl and postgres: first on PATH (symlinks resolved, so /usr/local/bin/initdb leads
 * to its real folder), then `pg_config --bindir`, then the newest `/usr/lib/postgresql/<major>/bin`.
 */
export async function findPostgresBinaries(search: BinarySearch = defaultBinarySearch()): Promise<string> {
	for (const dir of search.pathDirs) {
		const initdb = path.join(dir, 'initdb')
		if (!(await isExecutable(initdb))) continue
		const bindir = path.dirname(await realpath(initdb))
		if (await isServerBindir(bindir)) return bindir
	}
	if (search.pgConfig !== null) {
		const bindir = await capture(search.pgConfig, ['--bindir'])
		if (bindir && (await isServerBindir(bindir))) return bindir
	}
	for (const root of search.versionRoots) {
		const versions = await readdir(root).catch(() => [])
		const newestFirst = versions.filter((name) => /^\d+(\.\d+)?$/.test(name)).sort((a, b) => Number(b) - Number(a))
		for (const version of newestFirst) {
			const bindir = path.join(root, version, 'bin')
			if (await isServerBindir(bindir)) return bindir
		}
	}
	const searched = [
		...(search.pathDirs.length > 0 ? ['PATH'] : []),
		...(search.pgConfig !== null ? [`${search.pgConfig} --bindir`] : []),
		...search.versionRoots.map((root) => `${root}/*/bin`),
	]
	throw new PostgresNotFoundError(searched)
}

// ---------------------------------------------------------------------------------------------------------------
// Running server commands (as the postgres OS user when we are root)

type RunResult = { code: number; output: string }

function serverEnv(): NodeJS.ProcessEnv {
	// NOTE: PG* variables from the caller's shell (PGDATA, PGPORT, …) must not steer our cluster.
	return Object.fromEntries(Object.entries(process.env).filter(([name]) => !name.startsWith('PG')))
}

/** Runs a server binary; as root through `runuser -u postgres --`, from '/' so that no unreachable cwd is inherited. */
function runServerCommand(bindir: string, binary: string, args: ReadonlyArray<string>): Promise<RunResult> {
	const file = path.join(bindir, binary)
	const [command, commandArgs] = isRoot() ? ['runuser', ['-u', serverOsUser, '--', file, ...args]] : [file, [...args]]
	return new Promise((resolve, reject) => {
		// NOTE: pg_ctl start is always given -l, so the server never holds these pipes open after pg_ctl exits.
		const child = spawn(command, commandArgs, { cwd: '/', env: serverEnv(), stdio: ['ignore', 'pipe', 'pipe'] })
		let output = ''
		child.stdout.on('data', (chunk: Buffer) => (output += chunk.toString()))
		child.stderr.on('data', (chunk: Buffer) => (output += chunk.toString()))
		child.on('error', reject)
		child.on('close', (code) => resolve({ code: code ?? 1, output: output.trim() }))
	})
}

type ServerIds = { uid: number; gid: number }
let cachedServerIds: ServerIds | null = null

async function serverIds(): Promise<ServerIds> {
	if (cachedServerIds) return cachedServerIds
	const [uid, gid] = await Promise.all([capture('id', ['-u', serverOsUser]), capture('id', ['-g', serverOsUser])])
	if (!uid || !gid) {
		throw new Error(
			`Running as root, but the '${serverOsUser}' system user that runs the server is missing. ` +
				'`apt-get install -y postgresql` creates it.',
		)
	}
	cachedServerIds = { uid: Number(uid), gid: Number(gid) }
	return cachedServerIds
}

// ---------------------------------------------------------------------------------------------------------------
// Cluster folders

type ClusterPaths = {
	clusterDir: string
	dataDir: string
	logFile: string
	usersFile: string
	socketDir: string
}

function clusterPaths(clusterDir: string): ClusterPaths {
	const absolute = path.resolve(clusterDir)
	return {
		clusterDir: absolute,
		dataDir: path.join(absolute, 'data'),
		logFile: path.join(absolute, 'server.log'),
		usersFile: path.join(absolute, 'users.json'),
		// NOTE: a socket path longer than ~107 bytes fails, and /var/run/postgresql is not ours to write; so a short
		// folder in /tmp, unique per OS user and cluster.
		socketDir: path.join('/tmp', `bandproof-sock-${shortHash(`${process.getuid?.() ?? 0}:${absolute}`)}`),
	}
}

async function makeOwnedDir(dir: string): Promise<void> {
	await mkdir(dir, { recursive: true, mode: 0o700 })
	if (isRoot()) {
		const { uid, gid } = await serverIds()
		await chown(dir, uid, gid)
	}
	await chmod(dir, 0o700)
}

async function prepareDirectories(paths: ClusterPaths, bindir: string): Promise<void> {
	await makeOwnedDir(paths.clusterDir)
	await makeOwnedDir(paths.socketDir)
	if (isRoot()) {
		const probe = await runServerCommand(bindir, 'pg_ctl', ['--version'])
		const reachable = await new Promise<boolean>((resolve) => {
			execFile('runuser', ['-u', serverOsUser, '--', 'test', '-w', paths.clusterDir], (error) => resolve(!error))
		})
		if (probe.code !== 0 || !reachable) {
			throw new Error(
				`The '${serverOsUser}' user cannot reach ${paths.clusterDir}. As root the cluster must live outside ` +
					'mode-700 directories such as /root (the default is under /tmp).',
			)
		}
	}
}

const hasProcFs = existsSync('/proc/self/stat')

/** State and start time of a process from /proc (Linux); null when there is no such process. */
function procStat(pid: number): { state: string; startTicks: string } | null {
	let text: string
	try {
		text = readFileSync(`/proc/${pid}/stat`, 'utf8')
	} catch {
		return null
	}
	// The command name is in parentheses and may itself contain spaces or parentheses.
	const fields = text.slice(text.lastIndexOf(')') + 2).split(' ')
	return { state: fields[0] ?? '?', startTicks: fields[19] ?? '' }
}

function processIsAlive(pid: number): boolean {
	if (hasProcFs) {
		const stat = procStat(pid)
		// NOTE: a killed server that nobody reaped (PID 1 in containers often does not) stays a zombie: not alive.
		return stat !== null && stat.state !== 'Z' && stat.state !== 'X'
	}
	try {
		process.kill(pid, 0)
		return true
	} catch (error) {
		return pgErrorCode(error) === 'EPERM'
	}
}

function startTicksOf(pid: number): string | null {
	return procStat(pid)?.startTicks ?? null
}

function commandLineOf(pid: number): string | null {
	try {
		return readFileSync(`/proc/${pid}/cmdline`, 'utf8').replaceAll('\0', ' ')
	} catch {
		return null
	}
}

type RunningServer = { pid: number; port: number }

/**
 * The server currently running on this data folder, judged from postmaster.pid. When that process is gone (killed,
 * crashed) the file is left alone: PostgreSQL itself checks on the next start that no old child still holds the
 * shared memory, and takes over the stale file. Only a pid that now belongs to an unrelated live process (which
 * would make PostgreSQL refuse to start) is removed; by then the old server and its children are long gone.
 */
async function findRunningServer(paths: ClusterPaths): Promise<RunningServer | null> {
	const pidFile = path.join(paths.dataDir, 'postmaster.pid')
	const text = await readFile(pidFile, 'utf8').catch(() => null)
	if (text === null) return null
	const lines = text.split('\n')
	const pid = Number(lines[0])
	const port = Number(lines[3])
	if (!Number.isInteger(pid) || pid <= 0 || !processIsAlive(pid)) return null
	const commandLine = commandLineOf(pid)
	if (commandLine === null || /postgres|postmaster/.test(commandLine)) return { pid, port }
	await rm(pidFile, { force: true })
	return null
}

// ---------------------------------------------------------------------------------------------------------------
// Users of a running server: each process (and each handle within it) that called startCluster and has not left

type ClusterUser = { handle: string; pid: number; startTicks: string | null }
type ClusterUsers = { detached: boolean; users: Array<ClusterUser> }

async function readUsers(paths: ClusterPaths): Promise<ClusterUsers> {
	try {
		const parsed: unknown = JSON.parse(await readFile(paths.usersFile, 'utf8'))
		if (typeof parsed !== 'object' || parsed === null) return { detached: false, users: [] }
		const detached = 'detached' in parsed && parsed.detached === true
		const rawUsers = 'users' in parsed && Array.isArray(parsed.users) ? (parsed.users as Array<unknown>) : []
		const users = rawUsers.flatMap((user): Array<ClusterUser> => {
			if (typeof user !== 'object' || user === null) return []
			const { handle, pid, startTicks } = user as Record<string, unknown>
			if (typeof handle !== 'string' || typeof pid !== 'number') return []
			return [{ handle, pid, startTicks: typeof startTicks === 'string' ? startTicks : null }]
		})
		return { detached, users }
	} catch {
		return { detached: false, users: [] }
	}
}

async function writeUsers(paths: ClusterPaths, state: ClusterUsers): Promise<void> {
	const temporary = `${paths.usersFile}.${process.pid}.tmp`
	await writeFile(temporary, `${JSON.stringify(state, null, '\t')}\n`)
	await rename(temporary, paths.usersFile)
}

function isLiveUser(user: ClusterUser): boolean {
	if (!processIsAlive(user.pid)) return false
	// A recycled pid has a different start time: that process is not our user.
	return user.startTicks === null || startTicksOf(user.pid) === user.startTicks
}

// ---------------------------------------------------------------------------------------------------------------
// initdb, start, stop

async function initCluster(
	paths: ClusterPaths,
	bindir: string,
	purpose: ClusterPurpose,
	log: (line: string) => void,
): Promise<void> {
	const versionFile = path.join(paths.dataDir, 'PG_VERSION')
	if (await exists(versionFile)) return
	// initdb into a private folder, then rename: an interrupted initdb never leaves a half-made `data/` behind,
	// and two first starts racing each other cannot both write into the same folder.
	for (const name of await readdir(paths.clusterDir)) {
		const owner = /^data\.init-(\d+)$/.exec(name)?.[1]
		if (owner && !processIsAlive(Number(owner)))
			await rm(path.join(paths.clusterDir, name), { recursive: true, force: true })
	}
	const staging = path.join(paths.clusterDir, `data.init-${process.pid}`)
	log(`Creating the ${purpose} cluster in ${paths.clusterDir}`)
	const result = await runServerCommand(bindir, 'initdb', [
		`--pgdata=${staging}`,
		'--encoding=UTF8',
		'--locale=C.UTF-8',
		'--auth=trust', // loopback only and never used in production (see the top of this file)
		`--username=${superuserRole}`,
		...(purpose === 'app' ? [] : ['--no-sync']),
	])
	if (result.code !== 0) {
		await rm(staging, { recursive: true, force: true })
		throw new Error(`initdb failed for ${paths.clusterDir}:\n${result.output}`)
	}
	if (await exists(versionFile)) {
		await rm(staging, { recursive: true, force: true })
		return
	}
	await rm(paths.dataDir, { recursive: true, force: true })
	await rename(staging, paths.dataDir)
}

async function exists(file: string): Promise<boolean> {
	try {
		await access(file)
		return true
	} catch {
		return false
	}
}

async function portIsFree(port: number): Promise<boolean> {
	return new Promise((resolve) => {
		const server = net.createServer()
		server.once('error', () => resolve(false))
		server.listen({ port, host: '127.0.0.1', exclusive: true }, () => server.close(() => resolve(true)))
	})
}

async function logSize(paths: ClusterPaths): Promise<number> {
	try {
		return (await stat(paths.logFile)).size
	} catch {
		return 0
	}
}

/** The server log written since `offset` (at most the last 40 lines), for error messages. */
async function logTail(paths: ClusterPaths, offset = 0): Promise<string> {
	try {
		const handle = await open(paths.logFile, 'r')
		try {
			const size = (await handle.stat()).size
			const start = Math.max(offset, size - 64 * 1024)
			const buffer = Buffer.alloc(Math.max(0, size - start))
			await handle.read(buffer, 0, buffer.length, start)
			return buffer.toString('utf8').trimEnd().split('\n').slice(-40).join('\n')
		} finally {
			await handle.close()
		}
	} catch {
		return '(no server log)'
	}
}

async function rotateLog(paths: ClusterPaths): Promise<void> {
	if ((await logSize(paths)) > 10 * 1024 * 1024) await rename(paths.logFile, `${paths.logFile}.old`).catch(() => {})
}

function serverOptions(purpose: ClusterPurpose, port: number, socketDir: string): string {
	// NOTE: pg_ctl hands -o to /bin/sh; every value here is generated by us and free of shell metacharacters.
	if (!/^[\w/.-]+$/.test(socketDir)) throw new Error(`Unsafe socket directory: ${socketDir}`)
	const options = [`-p ${port}`, `-k ${socketDir}`, '-c listen_addresses=127.0.0.1']
	// Throw-away data: skip flushing to disk. A killed server still recovers everything committed (the OS has the
	// writes); only an OS crash could lose data. NOTE: synchronous_commit stays on, or a kill loses recent commits.
	if (purpose !== 'app') options.push('-c fsync=off', '-c full_page_writes=off')
	return options.join(' ')
}

async function startServer(
	paths: ClusterPaths,
	bindir: string,
	purpose: ClusterPurpose,
	port: number,
	timeoutMs: number,
	log: (line: string) => void,
): Promise<void> {
	await rotateLog(paths)
	for (let attempt = 1; ; attempt++) {
		const offset = await logSize(paths)
		log(`Starting PostgreSQL (${purpose}) on 127.0.0.1:${port}`)
		const result = await runServerCommand(bindir, 'pg_ctl', [
			'start',
			'--pgdata',
			paths.dataDir,
			'--log',
			paths.logFile,
			'--wait',
			'--timeout',
			String(Math.ceil(timeoutMs / 1000)),
			'-o',
			serverOptions(purpose, port, paths.socketDir),
		])
		if (result.code === 0) return
		const tail = await logTail(paths, offset)
		// After a SIGKILL the old server's children can hold its shared memory for a moment: try again shortly.
		const transient = /shared memory block|lock file .* already exists/i.test(tail)
		if (transient && attempt < 10) {
			if (attempt >= 3) await releaseZombieLock(paths)
			await sleep(500)
			continue
		}
		throw new Error(
			`PostgreSQL did not start on 127.0.0.1:${port} (cluster ${paths.clusterDir}).\n${result.output}\n` +
				`--- ${paths.logFile} ---\n${tail}`,
		)
	}
}

/**
 * A killed server that nobody reaps (PID 1 of some containers) stays a zombie, and PostgreSQL takes a live pid in
 * postmaster.pid as a running server. Once it has failed for a while (its children exit at once when it dies), the
 * lock of a zombie is released by hand.
 */
async function releaseZombieLock(paths: ClusterPaths): Promise<void> {
	const pidFile = path.join(paths.dataDir, 'postmaster.pid')
	const pid = Number((await readFile(pidFile, 'utf8').catch(() => '')).split('\n')[0])
	if (Number.isInteger(pid) && pid > 0 && procStat(pid)?.state === 'Z') await rm(pidFile, { force: true })
}

async function stopServer(paths: ClusterPaths, bindir: string, log: (line: string) => void): Promise<void> {
	if ((await findRunningServer(paths)) === null) return
	log(`Stopping PostgreSQL (${paths.clusterDir})`)
	const result = await runServerCommand(bindir, 'pg_ctl', ['stop', '--pgdata', paths.dataDir, '-m', 'fast', '--wait'])
	if (result.code !== 0 && (await findRunningServer(paths)) !== null) {
		throw new Error(`pg_ctl stop failed for ${paths.clusterDir}:\n${result.output}`)
	}
	await rmdir(paths.socketDir).catch(() => {}) // empty once the server is gone
}

/** Waits until `url` accepts a query; retries while the server is still coming up. */
async function waitForConnections(url: string, timeoutMs: number, paths: ClusterPaths | null): Promise<void> {
	const deadline = Date.now() + timeoutMs
	for (;;) {
		const sql = postgres(url, { ...quietClient, connect_timeout: 2 })
		try {
			await sql`select 1`
			return
		} catch (error) {
			const code = pgErrorCode(error)
			const retryable = ['ECONNREFUSED', 'ECONNRESET', 'CONNECT_TIMEOUT', '57P03'].includes(code ?? '')
			if (!retryable || Date.now() > deadline) {
				const tail = paths ? `\n--- ${paths.logFile} ---\n${await logTail(paths)}` : ''
				throw new Error(`PostgreSQL at ${redact(url)} does not accept connections: ${String(error)}${tail}`)
			}
		} finally {
			await sql.end({ timeout: 1 })
		}
		await sleep(100)
	}
}

// ---------------------------------------------------------------------------------------------------------------
// Public API

/** Creates the database named in `url` when it does not exist yet (connecting to the server's `postgres` database). */
export async function ensureDatabase(url: string): Promise<void> {
	const name = databaseNameOf(url)
	const probe = postgres(url, quietClient)
	try {
		await probe`select 1`
		return
	} catch (error) {
		if (pgErrorCode(error) !== '3D000') throw error // 3D000: database does not exist
	} finally {
		await probe.end({ timeout: 1 })
	}
	const admin = postgres(withDatabase(url, 'postgres'), quietClient)
	try {
		await admin`create database ${admin(name)}`
	} catch (error) {
		// 42P04: created meanwhile by someone else; 23505: the same race seen through the catalog's unique index.
		if (!['42P04', '23505'].includes(pgErrorCode(error) ?? '')) throw error
	} finally {
		await admin.end({ timeout: 1 })
	}
}

type MigrationOptions = { migrationsFolder?: string; log?: (line: string) => void }

function migrationsFolderOf(options: MigrationOptions): string {
	return path.resolve(projectRoot, options.migrationsFolder ?? 'drizzle')
}

async function journalEntryCount(folder: string): Promise<number> {
	const text = await readFile(path.join(folder, 'meta', '_journal.json'), 'utf8').catch(() => null)
	if (text === null) return 0
	const journal: unknown = JSON.parse(text)
	if (typeof journal !== 'object' || journal === null || !('entries' in journal) || !Array.isArray(journal.entries)) {
		throw new Error(`${folder}/meta/_journal.json is not a Drizzle journal`)
	}
	return journal.entries.length
}

/**
 * Applies the Drizzle migrations in `migrationsFolder` (default `drizzle/` of the project) to `url`. A missing folder
 * or an empty journal is not an error: there is simply nothing to apply yet. Concurrent callers queue on an
 * advisory lock.
 */
export async function runMigrations(url: string, options: MigrationOptions = {}): Promise<void> {
	const log = options.log ?? defaultLog
	const folder = migrationsFolderOf(options)
	const count = await journalEntryCount(folder)
	if (count === 0) {
		log(`No migrations in ${path.relative(projectRoot, folder) || folder} yet; nothing to apply`)
		return
	}
	// One connection only, so that the lock, the migrator's transaction and the unlock share a session.
	const client = postgres(url, quietClient)
	try {
		await client`select pg_advisory_lock(${migrationLockKey})`
		await migrate(drizzle({ client }), { migrationsFolder: folder })
		await client`select pg_advisory_unlock(${migrationLockKey})`
		log(`Migrations up to date (${count} in ${path.relative(projectRoot, folder) || folder})`)
	} finally {
		await client.end({ timeout: 5 })
	}
}

/**
 * Fingerprint of the migrations folder (journal plus every SQL file it lists); 'none' without migrations.
 * Lets a cached database (the test template) tell whether it is still current.
 */
export async function migrationsFingerprint(options: MigrationOptions = {}): Promise<string> {
	const folder = migrationsFolderOf(options)
	const journal = await readFile(path.join(folder, 'meta', '_journal.json'), 'utf8').catch(() => null)
	if (journal === null) return 'none'
	const hash = createHash('sha256').update(journal)
	const sqlFiles = (await readdir(folder)).filter((name) => name.endsWith('.sql')).sort()
	for (const name of sqlFiles) hash.update(`\0${name}\0`).update(await readFile(path.join(folder, name)))
	return hash.digest('hex').slice(0, 16)
}

/**
 * Starts (or joins) the cluster for `purpose` and returns the URL of its application database, which exists on
 * return. Does not migrate: call runMigrations. With DATABASE_URL set, uses that server and starts nothing.
 */
export async function startCluster(options: StartClusterOptions): Promise<Cluster> {
	const log = options.log ?? defaultLog
	const database = options.database ?? defaultDatabase
	const timeoutMs = options.timeoutMs ?? defaultTimeoutMs
	const external = options.databaseUrl === undefined ? process.env.DATABASE_URL : options.databaseUrl
	if (external) {
		log(`Using DATABASE_URL (${redact(external)}); no local cluster is started`)
		await ensureDatabase(external)
		return { url: external, port: null, clusterDir: null, startedHere: false, stop: async () => {} }
	}

	const bindir = await findPostgresBinaries(options.binarySearch)
	const requestedPort = resolvePort(options.purpose, options.port)
	const paths = clusterPaths(options.clusterDir ?? defaultClusterDir(options.purpose))
	await prepareDirectories(paths, bindir)
	await initCluster(paths, bindir, options.purpose, log)

	const me: ClusterUser = { handle: randomUUID(), pid: process.pid, startTicks: startTicksOf(process.pid) }
	let startedHere = false
	let port = requestedPort
	let running = await findRunningServer(paths)
	if (running) {
		const state = await readUsers(paths)
		const orphaned = !state.detached && !state.users.some(isLiveUser)
		if (orphaned && running.port !== requestedPort) {
			log(`Restarting the server left running on port ${running.port} by an earlier process`)
			await stopServer(paths, bindir, log)
			running = null
		} else {
			if (orphaned) log(`Reusing the server left running by an earlier process (pid ${running.pid})`)
			else if (running.port !== requestedPort) log(`Cluster already running on port ${running.port}; using it`)
			port = running.port
		}
	}
	if (!running) {
		if (!(await portIsFree(port))) {
			throw new Error(
				`Port ${port} on 127.0.0.1 is taken by another program (perhaps another checkout's cluster). ` +
					`Set ${portEnvNames[options.purpose]} to a free port.`,
			)
		}
		try {
			await startServer(paths, bindir, options.purpose, port, timeoutMs, log)
			startedHere = true
			await writeUsers(paths, { detached: false, users: [] })
		} catch (error) {
			// Another process may have won a race to start the same cluster: join it instead.
			const winner = await findRunningServer(paths)
			if (!winner) throw error
			port = winner.port
		}
	}

	const state = await readUsers(paths)
	await writeUsers(paths, {
		detached: state.detached || options.detached === true,
		users: [...state.users.filter(isLiveUser), me],
	})

	let stopped: Promise<void> | null = null
	const stop = (): Promise<void> => (stopped ??= leaveCluster(paths, bindir, me, log))
	try {
		const url = clusterUrl(port, database)
		await waitForConnections(withDatabase(url, 'postgres'), timeoutMs, paths)
		await ensureDatabase(url)
		return { url, port, clusterDir: paths.clusterDir, startedHere, stop }
	} catch (error) {
		await stop().catch(() => {})
		throw error
	}
}

async function leaveCluster(
	paths: ClusterPaths,
	bindir: string,
	me: ClusterUser,
	log: (line: string) => void,
): Promise<void> {
	const state = await readUsers(paths)
	const others = state.users.filter((user) => user.handle !== me.handle && isLiveUser(user))
	if (others.length > 0 || state.detached) {
		await writeUsers(paths, { detached: state.detached, users: others })
		return
	}
	await stopServer(paths, bindir, log)
	await rm(paths.usersFile, { force: true })
}

type ClusterRef = { purpose: ClusterPurpose; clusterDir?: string; binarySearch?: BinarySearch }

/** Stops the cluster's server whoever started it (the CLI's `stop`). */
export async function stopCluster(ref: ClusterRef, log: (line: string) => void = defaultLog): Promise<boolean> {
	const paths = clusterPaths(ref.clusterDir ?? defaultClusterDir(ref.purpose))
	if ((await findRunningServer(paths)) === null) return false
	await stopServer(paths, await findPostgresBinaries(ref.binarySearch), log)
	await rm(paths.usersFile, { force: true })
	return true
}

export type ClusterStatus = {
	clusterDir: string
	initialised: boolean
	running: RunningServer | null
	detached: boolean
	users: Array<number>
}

export async function clusterStatus(ref: ClusterRef): Promise<ClusterStatus> {
	const paths = clusterPaths(ref.clusterDir ?? defaultClusterDir(ref.purpose))
	const running = await findRunningServer(paths)
	const state = await readUsers(paths)
	return {
		clusterDir: paths.clusterDir,
		initialised: await exists(path.join(paths.dataDir, 'PG_VERSION')),
		running,
		detached: running !== null && state.detached,
		users: running ? state.users.filter(isLiveUser).map((user) => user.pid) : [],
	}
}

// ---------------------------------------------------------------------------------------------------------------
// CLI for humans: tsx scripts/postgres-cluster.ts start|stop|status|url [--purpose app|test|e2e]

const usage = 'Usage: tsx scripts/postgres-cluster.ts start|stop|status|url [--purpose app|test|e2e]'

function parsePurposeFlag(args: ReadonlyArray<string>): ClusterPurpose {
	const index = args.indexOf('--purpose')
	const value = index === -1 ? 'app' : args[index + 1]
	if (!isClusterPurpose(value)) throw new Error(`--purpose must be app, test or e2e\n${usage}`)
	return value
}

async function main(args: ReadonlyArray<string>): Promise<number> {
	const [command, ...rest] = args
	const purpose = parsePurposeFlag(rest)
	switch (command ?? '') {
		case 'start': {
			// Detached: the server keeps running after this command exits, until `stop`.
			const cluster = await startCluster({ purpose, detached: true })
			await runMigrations(cluster.url)
			process.stdout.write(`${cluster.url}\n`)
			return 0
		}
		case 'stop': {
			const stopped = await stopCluster({ purpose })
			if (!stopped) defaultLog(`The ${purpose} cluster is not running`)
			return 0
		}
		case 'status': {
			const status = await clusterStatus({ purpose })
			const state = status.running
				? `running (pid ${status.running.pid}, port ${status.running.port}` +
					`${status.detached ? ', detached' : ''}, users: ${status.users.join(' ') || 'none'})`
				: status.initialised
					? 'stopped'
					: 'not created yet'
			process.stdout.write(`${purpose} cluster in ${status.clusterDir}: ${state}\n`)
			return status.running ? 0 : 3
		}
		case 'url': {
			const running = (await clusterStatus({ purpose })).running
			process.stdout.write(
				`${process.env.DATABASE_URL || clusterUrl(running?.port ?? resolvePort(purpose), defaultDatabase)}\n`,
			)
			return 0
		}
		default:
			process.stderr.write(`${usage}\n`)
			return 2
	}
}

function isEntryPoint(): boolean {
	const script = process.argv[1]
	if (!script) return false
	try {
		return realpathSync(script) === realpathSync(fileURLToPath(import.meta.url))
	} catch {
		return false
	}
}

if (isEntryPoint()) {
	main(process.argv.slice(2)).then(
		(code) => process.exit(code),
		(error: unknown) => {
			process.stderr.write(`${error instanceof Error ? error.message : String(error)}\n`)
			process.exit(1)
		},
	)
}
