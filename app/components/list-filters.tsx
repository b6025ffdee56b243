import { Form, Link } from 'react-router'
import { inputClass } from '#app/components/forms.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { cn } from '#app/utils/misc.ts'

/** The filter bar above a list: a GET form (so filters live in the address), Apply, and Clear when filtered. */
export function FilterBar({
	children,
	clearTo,
	filtered,
}: {
	children: React.ReactNode
	clearTo: string
	filtered: boolean
}) {
	return (
		<Form method="get" role="search" className="mb-4 flex flex-wrap items-end gap-3">
			{children}
			<button type="submit" className={buttonVariants({ variant: 'secondary' })}>
				Apply
			</button>
			{filtered ? (
				<Link to={clearTo} className={buttonVariants({ variant: 'quiet' })}>
					Clear filters
				</Link>
			) : null}
		</Form>
	)
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
