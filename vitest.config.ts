import { defineConfig } from 'vitest/config'

// Kept apart from vite.config.ts: the React Router plugin must not run under Vitest.
export default defineConfig({
	test: {
		projects: [
			{
				test: {
					name: 'unit',
					include: ['tests/unit/**/*.test.ts'],
					environment: 'node',
					testTimeout: 30_000,
				},
			},
			{
				test: {
					name: 'integration',
					include: ['tests/integration/**/*.test.ts'],
					environment: 'node',
					globalSetup: ['tests/support/global-setup.ts'],
					setupFiles: ['tests/support/db-setup.ts'],
					testTimeout: 30_000,
					hookTimeout: 60_000,
					fileParallelism: false,
				},
			},
		],
	},
})
