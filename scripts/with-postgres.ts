/**
 * Runs a command next to the project's PostgreSQL:
 *
 *   tsx scripts/with-postgres.ts --purpose app -- react-router-serve ./build/server/index.js
 *
 * Starts (or joins) the cluster for the purpose, applies the migrations, runs the command with DATABASE_URL set,
 * forwards SIGINT/SIGTERM/SIGHUP to it, and when it exits leaves the cluster (stopping the server if nobody else
 * uses it) and exits with the command's status. With DATABASE_URL already set, that server is used and migrated.
 */
import { spawn } from 'node:child_process'
import type { ChildProcess } from 'node:child_process'
import { constants } from 'node:os'
import { isClusterPurpose, runMigrations, startCluster } from './postgres-cluster.ts'
import type { ClusterPurpose } from './postgres-cluster.ts'

const usage = 'Usage: tsx scripts/with-postgres.ts --purpose app|test|e2e -- <command> [args…]'
const forwardedSignals: ReadonlyArray<NodeJS.Signals> = ['SIGINT', 'SIGTERM', 'SIGHUP']

type Invocation = { purpose: ClusterPurpose; command: string; args: Array<string> }

function parseArguments(argv: ReadonlyArray<string>): Invocation {
	const separator = argv.indexOf('--')
	const own = separator === -1 ? argv : argv.slice(0, separator)
	const [command, ...args] = separator === -1 ? [] : argv.slice(separator + 1)
	const purposeIndex = own.indexOf('--purpose')
	const purpose = purposeIndex === -1 ? 'app' : own[purposeIndex + 1]
	if (!isClusterPurpose(purpose) || command === undefined) throw new Error(usage)
	return { purpose, command, args }
}

function exitCodeOf(code: number | null, signal: NodeJS.Signals | null): number {
	if (code !== null) return code
	return 128 + (signal ? constants.signals[signal] : 1)
}

async function main(argv: ReadonlyArray<string>): Promise<number> {
	const { purpose, command, args } = parseArguments(argv)
	let child: ChildProcess | null = null
	let interruptedBy: NodeJS.Signals | null = null
	// Installed before the cluster starts: a Ctrl-C during start-up must still end with the server stopped.
	for (const signal of forwardedSignals) {
		process.on(signal, () => {
			if (child && child.exitCode === null && child.signalCode === null) child.kill(signal)
			else interruptedBy ??= signal
		})
	}

	const cluster = await startCluster({ purpose })
	let exitCode = 1
	try {
		await runMigrations(cluster.url)
		if (interruptedBy) return exitCodeOf(null, interruptedBy)
		const running = spawn(command, args, { stdio: 'inherit', env: { ...process.env, DATABASE_URL: cluster.url } })
		child = running
		exitCode = await new Promise<number>((resolve) => {
			running.once('error', (error) => {
				process.stderr.write(`Could not run ${command}: ${error.message}\n`)
				resolve(127)
			})
			running.once('exit', (code, signal) => resolve(exitCodeOf(code, signal)))
		})
	} finally {
		await cluster.stop()
	}
	return exitCode
}

main(process.argv.slice(2)).then(
	(code) => process.exit(code),
	(error: unknown) => {
		process.stderr.write(`${error instanceof Error ? error.message : String(error)}\n`)
		process.exit(1)
	},
)
