import { useCallback, useEffect, useRef } from 'react'
import { Form, Link, useLocation, useNavigation, useSubmit } from 'react-router'
import { inputClass } from '#app/components/forms.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { cn } from '#app/utils/misc.ts'
import { SEARCH_TEXT_MAX } from '#shared/search/text-search.ts'

/** How long typing must pause before a live search asks the server: short enough to feel immediate. */
export const SEARCH_DEBOUNCE_MS = 250

/**
 * The filter bar above a list: a GET form (so filters live in the address, and it works without JavaScript), Apply,
 * and Clear when filtered. With `live`, the list follows the filters as the user types (debounced) or picks a
 * choice, through client-side navigations to the same page with a clean query string; `resultSummary` (e.g.
 * "3 spectra") is announced to screen readers after each update.
 */
export function FilterBar({
	children,
	clearTo,
	filtered,
	live = false,
	resultSummary,
}: {
	children: React.ReactNode
	clearTo: string
	filtered: boolean
	live?: boolean
	resultSummary?: string
}) {
	const formRef = useRef<HTMLFormElement>(null)
	const { pending, submitSoon, submitNow, isWaiting } = useLiveFilters()
	const location = useLocation()

	// Fields are uncontrolled, so a navigation that the form did not make (Back, Clear filters, a link) would leave
	// them showing stale text: bring them in line with the address, unless the user is still typing.
	useEffect(() => {
		const form = formRef.current
		if (!form || isWaiting()) return
		const params = new URLSearchParams(location.search)
		for (const element of Array.from(form.elements)) {
			if (!(element instanceof HTMLInputElement || element instanceof HTMLSelectElement) || !element.name) continue
			if (element instanceof HTMLInputElement && !['text', 'search'].includes(element.type)) continue
			const wanted = params.get(element.name) ?? ''
			if (element.value.trim() !== wanted.trim()) element.value = wanted
		}
	}, [location.search, isWaiting])

	return (
		<Form
			ref={formRef}
			method="get"
			role="search"
			aria-busy={live && pending ? true : undefined}
			className="group mb-4 flex flex-wrap items-end gap-3"
			onChange={
				live
					? (event) => {
							const target = event.target
							if (target instanceof HTMLSelectElement) submitNow(event.currentTarget, { replace: false })
							else if (target instanceof HTMLInputElement && target.type === 'search') submitSoon(event.currentTarget)
						}
					: undefined
			}
			onSubmit={
				live
					? (event) => {
							event.preventDefault()
							submitNow(event.currentTarget, { replace: false })
						}
					: undefined
			}
		>
			{children}
			<button type="submit" className={buttonVariants({ variant: 'secondary' })}>
				Apply
			</button>
			{filtered ? (
				<Link to={clearTo} className={buttonVariants({ variant: 'quiet' })}>
					Clear filters
				</Link>
			) : null}
			{resultSummary !== undefined ? (
				<p role="status" className="sr-only">
					{resultSummary}
				</p>
			) : null}
		</Form>
	)
}

/**
 * Submits a filter form as a client-side GET navigation to the current page: empty fields are left out of the
 * address, `page` starts again at 1, and nothing is sent when the filters did not change (e.g. a trailing space).
 * `submitSoon` waits for a pause in typing; each keystroke restarts the wait, and a newer navigation cancels an
 * older one still in flight (React Router does that), so the last query typed is the one shown.
 */
function useLiveFilters() {
	const submit = useSubmit()
	const location = useLocation()
	const navigation = useNavigation()
	const timer = useRef<ReturnType<typeof setTimeout> | null>(null)

	const cancel = useCallback(() => {
		if (timer.current !== null) clearTimeout(timer.current)
		timer.current = null
	}, [])
	useEffect(() => cancel, [cancel])

	const submitNow = useCallback(
		(form: HTMLFormElement, { replace }: { replace: boolean }) => {
			cancel()
			const params = new URLSearchParams()
			for (const [name, value] of new FormData(form)) {
				const text = typeof value === 'string' ? value.trim() : ''
				if (text) params.append(name, text)
			}
			const current = new URLSearchParams(location.search)
			current.delete('page')
			if (params.toString() === current.toString()) return
			void submit(params, { method: 'get', action: location.pathname, replace, preventScrollReset: true })
		},
		[cancel, location.pathname, location.search, submit],
	)

	const submitSoon = useCallback(
		(form: HTMLFormElement) => {
			cancel()
			// While the user refines a search, each step replaces the last in the history: Back leaves the search.
			const replace = new URLSearchParams(location.search).has('q')
			timer.current = setTimeout(() => submitNow(form, { replace }), SEARCH_DEBOUNCE_MS)
		},
		[cancel, location.search, submitNow],
	)

	const isWaiting = useCallback(() => timer.current !== null, [])
	const pending =
		navigation.state === 'loading' &&
		navigation.location.pathname === location.pathname &&
		navigation.formMethod === 'GET'
	return { pending, submitSoon, submitNow, isWaiting }
}

/** A labelled free-text filter. */
export function TextFilter({
	id,
	name,
	label,
	defaultValue,
	placeholder,
	className,
}: {
	id: string
	name: string
	label: string
	defaultValue: string | undefined
	placeholder?: string
	className?: string
}) {
	return (
		<div>
			<label htmlFor={id} className="mb-1 block text-sm font-medium">
				{label}
			</label>
			<input
				id={id}
				name={name}
				defaultValue={defaultValue ?? ''}
				placeholder={placeholder}
				className={cn(inputClass, className ?? 'w-64')}
			/>
		</div>
	)
}

/**
 * A labelled search box for a live FilterBar: typing in it filters the list. Without JavaScript it is a plain text
 * field of the GET form (Enter or Apply submits it).
 */
export function SearchFilter({
	id,
	label,
	defaultValue,
	placeholder,
	className,
}: {
	id: string
	label: string
	defaultValue: string | undefined
	placeholder?: string
	className?: string
}) {
	return (
		<div>
			<label htmlFor={id} className="mb-1 flex justify-between gap-2 text-sm font-medium">
				{label}
				{/* Shown while a live FilterBar (aria-busy) waits for the server; the status region announces the result. */}
				<span aria-hidden="true" className="text-ink-faint hidden font-normal group-aria-busy:inline">
					Searching…
				</span>
			</label>
			<input
				id={id}
				type="search"
				name="q"
				defaultValue={defaultValue ?? ''}
				placeholder={placeholder}
				maxLength={SEARCH_TEXT_MAX}
				autoComplete="off"
				spellCheck={false}
				className={cn(inputClass, className ?? 'w-64')}
			/>
		</div>
	)
}

/** A labelled choice filter whose empty first option means "any". */
export function SelectFilter({
	id,
	name,
	label,
	anyLabel,
	defaultValue,
	options,
	className,
}: {
	id: string
	name: string
	label: string
	anyLabel: string
	defaultValue: string | undefined
	options: ReadonlyArray<{ value: string; label: string }>
	className?: string
}) {
	return (
		<div>
			<label htmlFor={id} className="mb-1 block text-sm font-medium">
				{label}
			</label>
			<select id={id} name={name} defaultValue={defaultValue ?? ''} className={cn(inputClass, className ?? 'w-56')}>
				<option value="">{anyLabel}</option>
				{options.map((option) => (
					<option key={option.value} value={option.value}>
						{option.label}
					</option>
				))}
			</select>
		</div>
	)
}

/** Material options for filters and pickers: "RM-0101 · Acetylsalicylic acid". */
export function materialOptions(materials: ReadonlyArray<{ id: string; code: string; name: string }>) {
	return materials.map((material) => ({ value: material.id, label: `${material.code} · ${material.name}` }))
}
