import { type RouteConfig, index, layout, prefix, route } from '@react-router/dev/routes'

// THE url map. Every signed-in page hangs under the _app layout, whose middleware resolves the session;
// each loader and action then authorises its own permission.
export default [
	route('sign-in', 'routes/_public/sign-in.tsx'),
	route('sign-out', 'routes/_public/sign-out.tsx'),
	route('api/auth/*', 'routes/api/auth.$.ts'),
	route('healthz', 'routes/api/healthz.ts'),
	// REST API v1: resource routes authenticated by API keys (app/.server/api.ts), not by the session.
	...prefix('api/v1', [
		route('openapi.json', 'routes/api/v1/openapi.ts'),
		route('materials', 'routes/api/v1/materials.ts'),
		route('specifications', 'routes/api/v1/specifications.ts'),
		route('specifications/:specificationId', 'routes/api/v1/specifications.$specificationId.ts'),
		route('specifications/:specificationId/compare', 'routes/api/v1/specifications.$specificationId.compare.ts'),
		route('versions/:versionId', 'routes/api/v1/versions.$versionId.ts'),
		route('versions/:versionId/bands', 'routes/api/v1/versions.$versionId.bands.ts'),
		route('versions/:versionId/dossier.pdf', 'routes/api/v1/versions.$versionId.dossier.ts'),
		route('spectra', 'routes/api/v1/spectra.ts'),
	]),

	layout('routes/_app/layout.tsx', [
		index('routes/_app/overview.tsx'),
		...prefix('materials', [
			index('routes/materials/index.tsx'),
			route('new', 'routes/materials/new.tsx'),
			route(':materialId', 'routes/materials/$materialId.tsx'),
		]),
		...prefix('spectra', [
			index('routes/spectra/index.tsx'),
			route('upload', 'routes/spectra/upload.tsx'),
			route('upload-file', 'routes/spectra/upload-file.ts'),
			route(':spectrumId', 'routes/spectra/$spectrumId.tsx'),
			route(':spectrumId/data', 'routes/spectra/$spectrumId.data.ts'),
			route(':spectrumId/original', 'routes/spectra/$spectrumId.original.ts'),
		]),
		...prefix('specifications', [
			index('routes/specifications/index.tsx'),
			route('new', 'routes/specifications/new.tsx'),
			route(':specId', 'routes/specifications/$specId.tsx'),
			route(':specId/changes', 'routes/specifications/compare.tsx'),
			route(':specId/versions/:versionId', 'routes/specifications/$specId.versions.$versionId.tsx'),
			route(':specId/versions/:versionId/band-suggestions', 'routes/specifications/band-suggestions.ts'),
			route(':specId/versions/:versionId/dossier/:format', 'routes/specifications/dossier.ts'),
		]),
		...prefix('instruments', [
			index('routes/instruments/index.tsx'),
			route('new', 'routes/instruments/new.tsx'),
			route(':instrumentId', 'routes/instruments/$instrumentId.tsx'),
		]),
		...prefix('lots', [
			index('routes/lots/index.tsx'),
			route('new', 'routes/lots/new.tsx'),
			route(':lotId', 'routes/lots/$lotId.tsx'),
		]),
		...prefix('runs', [
			route(':runId', 'routes/runs/$runId.tsx'),
			route(':runId/retest', 'routes/runs/retest.tsx'),
			route(':runId/containers/:containerNumber', 'routes/runs/container.tsx'),
			route(':runId/record.pdf', 'routes/runs/record.ts'),
		]),
		route('queue', 'routes/queue.tsx'),
		route('queue/count', 'routes/queue.count.ts'),
		route('trends', 'routes/trends.tsx'),
		route('verify', 'routes/verify.tsx'),
		route('api-docs', 'routes/api-docs.tsx'),
		// Inspectors may POST here (their own read-only keys): see ROUTE_POLICIES in app/.server/context.ts.
		route('settings/api-keys', 'routes/settings/api-keys.tsx'),
		...prefix('inspection', [
			index('routes/inspection/index.tsx'),
			route(':versionId', 'routes/inspection/$versionId.tsx'),
			route(':versionId/dossier/:format', 'routes/inspection/dossier.ts'),
		]),
		route('audit', 'routes/audit/index.tsx'),
		route('audit/export.csv', 'routes/audit/export.ts'),
		...prefix('admin', [
			route('users', 'routes/admin/users.tsx'),
			route('users/new', 'routes/admin/users.new.tsx'),
			route('users/:userId', 'routes/admin/users.$userId.tsx'),
			route('grants', 'routes/admin/grants.tsx'),
			route('mailbox', 'routes/admin/mailbox.tsx'),
		]),
	]),

	route('*', 'routes/not-found.tsx'),
] satisfies RouteConfig
