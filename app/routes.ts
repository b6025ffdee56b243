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
	// Outside the _app layout on purpose: its middleware refuses every POST from read-only roles, and inspectors
	// may manage their own read-only keys. The page resolves the session itself (see its middleware).
	route('settings/api-keys', 'routes/settings/api-keys.tsx'),

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
		route('queue', 'routes/queue.tsx'),
		route('trends', 'routes/trends.tsx'),
		route('verify', 'routes/verify.tsx'),
		route('api-docs', 'routes/api-docs.tsx'),
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
