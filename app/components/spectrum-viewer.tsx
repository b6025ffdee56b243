import { useEffect, useState } from 'react'
import { z } from 'zod'
import {
	SpectrumPlot,
	type BandMarker,
	type ExclusionRegion,
	type PeakLabel,
	type PlotSeries,
	type SeriesColorToken,
} from '#app/components/spectrum-plot.tsx'
import { Button } from '#app/components/ui/button.tsx'
import { cn } from '#app/utils/misc.ts'

/**
 * What a spectrum data route answers (`GET /spectra/:id/data?maxPoints=`): x in cm⁻¹, y in absorbance, thinned for
 * display on the server. Exported so the route can check its response against the same contract.
 */
export const SpectrumDataSchema = z
	.object({
		id: z.string(),
		label: z.string(),
		x: z.array(z.number()),
		y: z.array(z.number()),
		unit: z.literal('absorbance'),
	})
	.refine((data) => data.x.length === data.y.length, { message: 'x and y have different lengths' })

export type SpectrumData = z.infer<typeof SpectrumDataSchema>

export type SpectrumSource = { id: string; label: string; url: string; colorToken?: SeriesColorToken }

export type SpectrumViewerProps = {
	sources: ReadonlyArray<SpectrumSource>
	bands?: ReadonlyArray<BandMarker>
	exclusionRegions?: ReadonlyArray<ExclusionRegion>
	peaks?: ReadonlyArray<PeakLabel>
	height?: number
	className?: string
}

type Failure = { source: SpectrumSource; reason: string }

type LoadState = { status: 'loading' } | { status: 'done'; series: Array<PlotSeries>; failures: Array<Failure> }

/**
 * The spectrum chart with its data fetched by the browser from JSON resource routes, one request per source,
 * so the page itself stays light. Sources that fail are named with the reason; the others are still drawn.
 */
export function SpectrumViewer({
	sources,
	bands,
	exclusionRegions,
	peaks,
	height = 380,
	className,
}: SpectrumViewerProps) {
	const [state, setState] = useState<LoadState>({ status: 'loading' })
	const [attempt, setAttempt] = useState(0)
	const key = sources.map((s) => `${s.id}|${s.url}|${s.label}|${s.colorToken ?? ''}`).join('\n')

	useEffect(() => {
		const controller = new AbortController()
		setState({ status: 'loading' })
		void Promise.all(sources.map((source) => load(source, controller.signal))).then((results) => {
			if (controller.signal.aborted) return
			const series: Array<PlotSeries> = []
			const failures: Array<Failure> = []
			for (const result of results) {
				if (result.ok) series.push(result.series)
				else failures.push(result.failure)
			}
			setState({ status: 'done', series, failures })
		})
		return () => controller.abort()
		// NOTE: `key` stands for the sources' content, so a new array with the same sources does not refetch.
	}, [key, attempt])

	if (sources.length === 0) {
		return <Notice height={height} className={className} text="No spectrum has been chosen for this view yet." />
	}
	if (state.status === 'loading') {
		return (
			<Notice
				height={height}
				className={className}
				busy
				text={`Loading ${sources.length === 1 ? `spectrum “${sources[0]!.label}”` : `${sources.length} spectra`}…`}
			/>
		)
	}
	const failureList =
		state.failures.length > 0 ? (
			<div role="alert" className="border-danger bg-danger-soft text-ink mb-3 rounded-md border-l-4 px-4 py-3 text-sm">
				<p className="font-semibold">
					{state.failures.length === sources.length
						? 'The spectra could not be loaded.'
						: `${state.failures.length} of ${sources.length} spectra could not be loaded; the others are shown.`}
				</p>
				<ul className="mt-1 list-disc pl-5">
					{state.failures.map((f) => (
						<li key={f.source.id}>
							{f.source.label}: {f.reason}
						</li>
					))}
				</ul>
				<Button variant="secondary" size="sm" className="mt-2" onClick={() => setAttempt((n) => n + 1)}>
					Try again
				</Button>
			</div>
		) : null
	return (
		<div className={className}>
			{failureList}
			{state.series.length > 0 ? (
				<SpectrumPlot
					series={state.series}
					bands={bands}
					exclusionRegions={exclusionRegions}
					peaks={peaks}
					height={height}
				/>
			) : null}
		</div>
	)
}

function Notice({
	text,
	height,
	className,
	busy,
}: {
	text: string
	height: number
	className?: string
	busy?: boolean
}) {
	return (
		<div
			role="status"
			aria-busy={busy}
			className={cn(
				'border-rule bg-sheet text-ink-soft flex items-center justify-center rounded-lg border px-6 text-center text-sm',
				className,
			)}
			style={{ height }}
		>
			{text}
		</div>
	)
}

type Loaded = { ok: true; series: PlotSeries } | { ok: false; failure: Failure }

async function load(source: SpectrumSource, signal: AbortSignal): Promise<Loaded> {
	const fail = (reason: string): Loaded => ({ ok: false, failure: { source, reason } })
	let response: Response
	try {
		response = await fetch(source.url, { headers: { Accept: 'application/json' }, signal })
	} catch (error) {
		if (signal.aborted) return fail('the request was cancelled.')
		return fail(
			`the server could not be reached (${error instanceof Error ? error.message : 'network error'}). Check the connection and try again.`,
		)
	}
	if (!response.ok) return fail(httpReason(response.status, response.statusText))
	let body: unknown
	try {
		body = await response.json()
	} catch {
		return fail(
			'the server answered with something that is not spectrum data (not JSON). Report this to an administrator.',
		)
	}
	const parsed = SpectrumDataSchema.safeParse(body)
	if (!parsed.success) {
		const issue = parsed.error.issues[0]
		return fail(
			`the data are malformed (${issue ? `${issue.path.join('.') || 'body'}: ${issue.message}` : 'invalid'}). Report this to an administrator.`,
		)
	}
	if (parsed.data.x.length < 2) return fail('the spectrum has fewer than two points, so there is nothing to draw.')
	const { label, x, y } = parsed.data
	return { ok: true, series: { id: source.id, label: source.label || label, x, y, colorToken: source.colorToken } }
}

function httpReason(status: number, statusText: string): string {
	const code = `HTTP ${status}${statusText ? ` ${statusText}` : ''}`
	if (status === 401) return `you are signed out (${code}). Sign in again and reload the page.`
	if (status === 403) return `you do not have access to this spectrum (${code}).`
	if (status === 404) return `the spectrum was not found (${code}); it may have been removed.`
	if (status >= 500)
		return `the server failed while reading it (${code}). Try again; if it persists, tell an administrator.`
	return `the server refused the request (${code}).`
}
