/**
 * The whole app in the test process, answering fetch Requests: Vite's dev server in middleware mode loads React
 * Router's server build ('virtual:react-router/server-build': app/routes.ts, root.tsx, entry.server.tsx and every
 * route module) the way `react-router dev` does, and React Router's createRequestHandler serves it. Every request
 * therefore runs the real root middleware (security headers, cross-site and body-size guards), the real layout
 * middleware (session → actor, read-only refusal), the real loaders and actions, and renders real documents.
 *
 * No port is opened: HMR and its WebSocket are off, and nothing listens. The server build's modules are Vite's own
 * instances, apart from the ones the test imports: they share the process, its environment and the database, not
 * module state (the app's database pool is closed by `close()`).
 */
import path from 'node:path'
import { createRequestHandler, type ServerBuild } from 'react-router'
import { createServer, isRunnableDevEnvironment } from 'vite'
import { projectRoot } from '#scripts/postgres-cluster.ts'

export type AppHandler = {
	/** The server build: `routes` maps each route id (its file under app/, without extension) to its module. */
	build: ServerBuild
	/** Answers one request as the production server would (errors are not exposed to the client). */
	fetch: (request: Request) => Promise<Response>
	close: () => Promise<void>
}

export async function startAppHandler(): Promise<AppHandler> {
	const vite = await createServer({
		root: projectRoot,
		configFile: path.join(projectRoot, 'vite.config.ts'),
		appType: 'custom',
		logLevel: 'warn',
		server: { middlewareMode: true, hmr: false, ws: false },
	})
	try {
		const ssr = vite.environments.ssr
		if (!ssr || !isRunnableDevEnvironment(ssr)) throw new Error('Vite has no runnable SSR environment')
		const build = (await ssr.runner.import('virtual:react-router/server-build')) as ServerBuild
		const handler = createRequestHandler(build, 'production')
		const client = (await ssr.runner.import('/app/.server/db/client.ts')) as { closeDb: () => Promise<void> }
		return {
			build,
			fetch: (request) => handler(request),
			close: async () => {
				await client.closeDb()
				await vite.close()
			},
		}
	} catch (error) {
		await vite.close()
		throw error
	}
}
