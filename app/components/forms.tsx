import { useId } from 'react'
import { cn } from '#app/utils/misc.ts'

type ErrorList = Array<string> | undefined

/** Field errors, linked to their input through aria-describedby. */
export function FieldErrors({ id, errors }: { id: string; errors: ErrorList }) {
	if (!errors?.length) return null
	return (
		<ul id={id} className="text-danger mt-1 text-sm">
			{errors.map((message) => (
				<li key={message}>{message}</li>
			))}
		</ul>
	)
}

/** Form-level errors (not tied to one field), e.g. a conflict or a refused sign-in. */
export function FormErrors({ id, errors }: { id?: string; errors: ErrorList }) {
	if (!errors?.length) return null
	return (
		<div
			id={id}
			role="alert"
			className="border-danger bg-danger-soft text-danger mb-4 rounded-md border px-4 py-3 text-sm"
		>
			{errors.map((message) => (
				<p key={message}>{message}</p>
			))}
		</div>
	)
}

const inputClass =
	'block w-full rounded-md border border-rule-strong bg-sheet px-3 py-2 text-sm text-ink shadow-xs placeholder:text-ink-faint aria-[invalid=true]:border-danger'

/** A labelled text input with inline errors; pass Conform's getInputProps(...) as `inputProps`. */
export function Field({
	label,
	hint,
	errors,
	inputProps,
	className,
}: {
	label: string
	hint?: string
	errors?: ErrorList
	inputProps: React.InputHTMLAttributes<HTMLInputElement>
	className?: string
}) {
	const fallbackId = useId()
	const id = inputProps.id ?? fallbackId
	const errorId = `${id}-error`
	const hintId = hint ? `${id}-hint` : undefined
	const invalid = Boolean(errors?.length)
	return (
		<div className={className}>
			<label htmlFor={id} className="text-ink mb-1 block text-sm font-medium">
				{label}
			</label>
			<input
				{...inputProps}
				id={id}
				className={cn(inputClass, inputProps.className)}
				aria-invalid={invalid || undefined}
				aria-describedby={[invalid ? errorId : null, hintId].filter(Boolean).join(' ') || undefined}
			/>
			{hint ? (
				<p id={hintId} className="text-ink-faint mt-1 text-xs">
					{hint}
				</p>
			) : null}
			<FieldErrors id={errorId} errors={errors} />
		</div>
	)
}

/** A labelled multi-line input with inline errors. */
export function TextareaField({
	label,
	hint,
	errors,
	textareaProps,
	className,
}: {
	label: string
	hint?: string
	errors?: ErrorList
	textareaProps: React.TextareaHTMLAttributes<HTMLTextAreaElement>
	className?: string
}) {
	const fallbackId = useId()
	const id = textareaProps.id ?? fallbackId
	const errorId = `${id}-error`
	const invalid = Boolean(errors?.length)
	return (
		<div className={className}>
			<label htmlFor={id} className="text-ink mb-1 block text-sm font-medium">
				{label}
			</label>
			<textarea
				{...textareaProps}
				id={id}
				className={cn(inputClass, 'min-h-24')}
				aria-invalid={invalid || undefined}
				aria-describedby={invalid ? errorId : undefined}
			/>
			{hint ? <p className="text-ink-faint mt-1 text-xs">{hint}</p> : null}
			<FieldErrors id={errorId} errors={errors} />
		</div>
	)
}

/** A labelled select with inline errors; pass Conform's getSelectProps(...) as `selectProps`. */
export function SelectField({
	label,
	hint,
	errors,
	selectProps,
	options,
	placeholder,
	className,
}: {
	label: string
	hint?: string
	errors?: ErrorList
	selectProps: React.SelectHTMLAttributes<HTMLSelectElement>
	options: ReadonlyArray<{ value: string; label: string; disabled?: boolean }>
	placeholder?: string
	className?: string
}) {
	const fallbackId = useId()
	const id = selectProps.id ?? fallbackId
	const errorId = `${id}-error`
	const hintId = hint ? `${id}-hint` : undefined
	const invalid = Boolean(errors?.length)
	return (
		<div className={className}>
			<label htmlFor={id} className="text-ink mb-1 block text-sm font-medium">
				{label}
			</label>
			<select
				{...selectProps}
				id={id}
				className={cn(inputClass, selectProps.className)}
				aria-invalid={invalid || undefined}
				aria-describedby={[invalid ? errorId : null, hintId].filter(Boolean).join(' ') || undefined}
			>
				{placeholder ? <option value="">{placeholder}</option> : null}
				{options.map((option) => (
					<option key={option.value} value={option.value} disabled={option.disabled}>
						{option.label}
					</option>
				))}
			</select>
			{hint ? (
				<p id={hintId} className="text-ink-faint mt-1 text-xs">
					{hint}
				</p>
			) : null}
			<FieldErrors id={errorId} errors={errors} />
		</div>
	)
}

export { inputClass }
