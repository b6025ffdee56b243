/**
 * `npm test`: the whole suite, as CI runs it. Vitest (unit, then integration against a PostgreSQL cluster
 * that the suite starts itself), then the production build and Playwright in Debian's Chromium against it
 * on a free loopback port. Exits non-zero when any part fails.
 */
import { spawnSync } from 'node:child_process'
import { mkdirSync } from 'node:fs'
import net from 'node:net'
import path from 'node:path'
import { projectRoot } from './postgres-cluster.ts'

const bin = (name: string) => path.join(projectRoot, 'node_modules/.bin', name)

function run(label: string, command: string, args: Array<string>, env: NodeJS.ProcessEnv = {}): void {
	console.log(`\n── ${label} ──`)
	const result = spawnSync(command, args, { cwd: projectRoot, stdio: 'inherit', env: { ...process.env, ...env } })
	if (result.status !== 0) {
		console.error(`\n${label} failed (exit ${result.status ?? result.signal}).`)
		process.exit(result.status ?? 1)
	}
}

function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const server = net.createServer()
		server.once('error', reject)
		server.listen(0, '127.0.0.1', () => {
			const address = server.address()
			server.close(() =>
				address && typeof address === 'object' ? resolve(address.port) : reject(new Error('no port')),
			)
		})
	})
}

const only = process.argv[2]
if (!only || only === 'types') {
	run('Route types', bin('react-router'), ['typegen'])
	run('Type check', bin('tsc'), ['--noEmit'])
}
if (!only || only === 'unit') run('Unit tests', bin('vitest'), ['run', '--project', 'unit'])
if (!only || only === 'integration')
	run('Integration tests (PostgreSQL)', bin('vitest'), ['run', '--project', 'integration'])
if (!only || only === 'e2e') {
	run('Production build', bin('react-router'), ['build'])
	mkdirSync(path.join(projectRoot, 'screenshots'), { recursive: true })
	run('End-to-end tests (Chromium)', bin('playwright'), ['test'], { E2E_PORT: String(await freePort()) })
}
