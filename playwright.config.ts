import { defineConfig } from '@playwright/test'

// The test command (scripts/test.ts) picks a free port and builds the app first; run alone, 4173 is used.
const port = Number(process.env.E2E_PORT ?? 4173)
const baseURL = `http://127.0.0.1:${port}`

export default defineConfig({
	testDir: 'tests/e2e',
	fullyParallel: false,
	workers: 1,
	// No retries: the journeys change the seeded data, so a retry would not start from the same state.
	retries: 0,
	reporter: [['list']],
	timeout: 60_000,
	expect: { timeout: 10_000 },
	use: {
		baseURL,
		trace: 'on-first-retry',
		launchOptions: {
			executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
			args: [
				'--headless',
				'--no-sandbox',
				'--disable-gpu',
				'--disable-quic',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync',
				'--no-first-run',
			],
		},
	},
	projects: [{ name: 'chromium', use: { browserName: 'chromium', viewport: { width: 1366, height: 860 } } }],
	webServer: {
		command: `node_modules/.bin/tsx scripts/e2e-server.ts`,
		url: `${baseURL}/healthz`,
		timeout: 120_000,
		reuseExistingServer: false,
		// SIGTERM lets the server script stop its PostgreSQL cluster instead of leaving it running.
		gracefulShutdown: { signal: 'SIGTERM', timeout: 10_000 },
		env: { PORT: String(port), BETTER_AUTH_URL: baseURL },
		stdout: 'ignore',
		stderr: 'pipe',
	},
})
