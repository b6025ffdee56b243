import { href, Link } from 'react-router'
import type { Route } from './+types/api-docs'
import { authorize } from '#app/.server/context.ts'
import { buildOpenApiDocument, listOperations } from '#app/.server/openapi.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'

export async function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'workspace:enter')
	const document = buildOpenApiDocument()
	return { title: document.info.title, version: document.info.version, operations: listOperations(document) }
}

export default function ApiDocs({ loaderData }: Route.ComponentProps) {
	return (
		<>
			<PageHeader
				title={`${loaderData.title} ${loaderData.version}`}
				description="Every operation of /api/v1, read from its OpenAPI 3.1 document. Authenticate with a personal API key: Authorization: Bearer <key>. Errors are application/problem+json."
			/>
			<p className="mb-6 text-sm">
				<a href="/api/v1/openapi.json" className="text-accent underline-offset-4 hover:underline">
					OpenAPI document (JSON)
				</a>
				{' · '}
				<Link to={href('/settings/api-keys')} className="text-accent underline-offset-4 hover:underline">
					Your API keys
				</Link>
			</p>
			<ul className="space-y-4">
				{loaderData.operations.map((operation) => (
					<li
						key={operation.operationId}
						id={operation.operationId}
						className="bg-sheet border-rule rounded-lg border p-4"
						data-testid="api-operation"
					>
						<h2 className="font-mono text-sm font-semibold">
							<span className="text-accent-strong mr-2">{operation.method}</span>
							{operation.path}
						</h2>
						<p className="mt-1 text-sm">
							{operation.summary}. Scope: <strong>{operation.scope}</strong>.
						</p>
						{operation.parameters.length > 0 ? (
							<dl className="mt-2 grid grid-cols-[max-content_1fr] gap-x-4 text-sm">
								{operation.parameters.map((param) => (
									<div key={`${param.in}-${param.name}`} className="contents">
										<dt className="font-mono">
											{param.name} <span className="text-ink-faint">({param.in})</span>
										</dt>
										<dd>{param.description}</dd>
									</div>
								))}
							</dl>
						) : null}
						{operation.body ? <p className="mt-2 text-sm">Body: {operation.body}</p> : null}
						<p className="text-ink-soft mt-2 text-sm">
							Responses:{' '}
							{operation.responses.map((response) => `${response.status} ${response.description}`).join(' · ')}
						</p>
					</li>
				))}
			</ul>
		</>
	)
}

export function meta() {
	return [{ title: 'API reference · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
