import { expect, test } from 'vitest'
import {
	decideBodySize,
	MAX_BODY_BYTES,
	routePath,
	STREAMED_UPLOAD_PATHS,
	STREAMED_UPLOAD_PATTERNS,
} from '#app/.server/security/body-limit.ts'
import routes from '#app/routes.ts'

const base: Parameters<typeof decideBodySize>[0] = {
	method: 'POST',
	pathname: '/materials/new',
	contentType: 'application/x-www-form-urlencoded',
	contentLength: '100',
	transferEncoding: null,
}
const request = (overrides: Partial<typeof base>) => decideBodySize({ ...base, ...overrides })

test('[SEC-030] a form body up to 1 MiB is read; one byte more is refused with 413 and a message', () => {
	expect(MAX_BODY_BYTES).toBe(1024 * 1024)
	expect(request({ contentLength: String(MAX_BODY_BYTES) })).toEqual({ ok: true })
	const refused = request({ contentLength: String(MAX_BODY_BYTES + 1) })
	expect(refused).toMatchObject({ ok: false, status: 413 })
	expect(refused.ok ? '' : refused.message).toContain('larger than 1 MB')
	expect(request({ contentType: 'application/json', contentLength: '5000000' })).toMatchObject({ status: 413 })
	// The cap is a parameter, for a route family that needs another one.
	expect(decideBodySize({ ...base, contentLength: '2000' }, 1000)).toMatchObject({
		status: 413,
		message: expect.stringContaining('1 kB'),
	})
})

test('[SEC-031] a body of unknown length is refused with 411; no body at all, and GET or HEAD, pass', () => {
	expect(request({ contentLength: null, transferEncoding: 'chunked' })).toMatchObject({ ok: false, status: 411 })
	expect(request({ contentLength: 'abc', transferEncoding: 'chunked' })).toMatchObject({ ok: false, status: 411 })
	expect(request({ contentLength: null, contentType: null })).toEqual({ ok: true })
	expect(request({ method: 'GET', contentLength: '99999999' })).toEqual({ ok: true })
	expect(request({ method: 'HEAD', contentLength: null, transferEncoding: 'chunked' })).toEqual({ ok: true })
})

test('[SEC-032] only the upload routes take large multipart bodies (their parser has its own limits); other routes do not', () => {
	const upload = { contentType: 'multipart/form-data; boundary=x', contentLength: '50000000' }
	for (const pathname of [
		'/spectra/upload',
		'/spectra/upload.data',
		'/spectra/upload-file',
		'/verify',
		'/verify.data',
		'/api/v1/spectra',
	]) {
		expect(request({ ...upload, pathname }), pathname).toEqual({ ok: true })
	}
	expect(request({ ...upload, pathname: '/spectra/upload', contentLength: null, transferEncoding: 'chunked' })).toEqual(
		{
			ok: true,
		},
	)
	expect(request({ ...upload, pathname: '/materials/new' })).toMatchObject({ status: 413 })
	// Urlencoded to an upload route is just a form.
	expect(request({ pathname: '/verify', contentLength: '50000000' })).toMatchObject({ status: 413 })
})

test('[SEC-033] data-request paths map back to route paths', () => {
	expect(routePath('/spectra/upload.data')).toBe('/spectra/upload')
	expect(routePath('/_root.data')).toBe('/')
	expect(routePath('/verify/')).toBe('/verify')
	expect(routePath('/')).toBe('/')
})

test('[SEC-034] every streamed-upload path is a route of app/routes.ts', () => {
	type Entry = { path?: string; children?: Array<Entry> }
	const paths = new Set<string>()
	const walk = (entries: ReadonlyArray<Entry>, prefix: string) => {
		for (const entry of entries) {
			const full = entry.path ? `${prefix}/${entry.path}`.replace(/\/+/g, '/') : prefix
			if (entry.path) paths.add(full)
			if (entry.children) walk(entry.children, full)
		}
	}
	walk(routes as ReadonlyArray<Entry>, '')
	for (const path of STREAMED_UPLOAD_PATHS) expect(paths, path).toContain(path)
	// Each pattern matches a route of the map once its parameters are filled in.
	const filled = [...paths].map((path) => path.replace(/:[A-Za-z]+/g, '0f3c6a52-5d7e-4c55-9a8e-1b2c3d4e5f60'))
	for (const pattern of STREAMED_UPLOAD_PATTERNS) {
		expect(
			filled.some((path) => pattern.test(path)),
			String(pattern),
		).toBe(true)
	}
})

test('[SEC-035] a multipart post to a run or check upload is streamed; the same path without multipart is capped', () => {
	const large = { method: 'POST', contentLength: String(5 * 1024 * 1024), transferEncoding: null }
	for (const pathname of ['/lots/new', '/instruments/0f3c6a52-5d7e-4c55-9a8e-1b2c3d4e5f60', '/runs/abc/retest']) {
		expect(decideBodySize({ ...large, pathname, contentType: 'multipart/form-data; boundary=x' }).ok).toBe(true)
		expect(decideBodySize({ ...large, pathname, contentType: 'application/x-www-form-urlencoded' }).ok).toBe(false)
	}
	expect(decideBodySize({ ...large, pathname: '/runs/abc', contentType: 'multipart/form-data; boundary=x' }).ok).toBe(
		false,
	)
})
