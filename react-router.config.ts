import type { Config } from '@react-router/dev/config'

export default {
	ssr: true,
	// React Router's own check answers a foreign Origin on page and data actions with a bare 400 before any middleware
	// runs. The root middleware (app/.server/security/origin.ts) checks every non-GET request instead, resource routes
	// included, knows the public URL behind a proxy, and answers 403 with a message and the security headers.
	allowedActionOrigins: ['**'],
	future: {
		v8_middleware: true,
		v8_splitRouteModules: true,
		v8_viteEnvironmentApi: true,
	},
} satisfies Config
