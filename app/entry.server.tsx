import { PassThrough } from 'node:stream'
import { createReadableStreamFromReadable } from '@react-router/node'
import { isbot } from 'isbot'
import { renderToPipeableStream, type RenderToPipeableStreamOptions } from 'react-dom/server'
import { type EntryContext, type HandleErrorFunction, type RouterContextProvider, ServerRouter } from 'react-router'
import { ensureBackgroundWork } from '#app/.server/background.ts'
import { nonceContext } from '#app/.server/security/middleware.ts'
import { NonceProvider } from '#app/utils/nonce.ts'

export const streamTimeout = 5_000

ensureBackgroundWork()

export default function handleRequest(
	request: Request,
	responseStatusCode: number,
	responseHeaders: Headers,
	routerContext: EntryContext,
	loadContext: RouterContextProvider,
) {
	if (request.method.toUpperCase() === 'HEAD') {
		responseHeaders.set('Content-Type', 'text/html')
		return new Response(null, { status: responseStatusCode, headers: responseHeaders })
	}
	// The root middleware made this response's nonce; its Content-Security-Policy allows only scripts that carry it.
	const nonce = loadContext.get(nonceContext) ?? undefined
	return new Promise<Response>((resolve, reject) => {
		let shellRendered = false
		const userAgent = request.headers.get('user-agent')
		const readyOption: keyof RenderToPipeableStreamOptions =
			(userAgent && isbot(userAgent)) || routerContext.isSpaMode ? 'onAllReady' : 'onShellReady'
		let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000)
		const { pipe, abort } = renderToPipeableStream(
			<NonceProvider value={nonce}>
				<ServerRouter context={routerContext} url={request.url} nonce={nonce} />
			</NonceProvider>,
			{
				nonce,
				[readyOption]() {
					shellRendered = true
					const body = new PassThrough({
						final(callback) {
							clearTimeout(timeoutId)
							timeoutId = undefined
							callback()
						},
					})
					responseHeaders.set('Content-Type', 'text/html')
					resolve(
						new Response(createReadableStreamFromReadable(body), {
							headers: responseHeaders,
							status: responseStatusCode,
						}),
					)
					pipe(body)
				},
				onShellError(error: unknown) {
					reject(error)
				},
				onError(error: unknown) {
					responseStatusCode = 500
					if (shellRendered) console.error(error)
				},
			},
		)
	})
}

/** Every unexpected server error is logged here (people see a plain message, never the stack). */
export const handleError: HandleErrorFunction = (error, { request }) => {
	if (request.signal.aborted) return
	console.error(`[${new Date().toISOString()}] ${request.method} ${new URL(request.url).pathname}:`, error)
}
