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

type ControlWiring = { id: string; invalid: boolean; describedBy: string | undefined }

/** Label, hint and errors around one form control, with the ids that tie them to it (aria-describedby). */
function LabelledControl({
	label,
	hint,
	errors,
	controlId,
	className,
	children,
}: {
	label: string
	hint?: string
	errors?: ErrorList
	controlId: string | undefined
	className?: string
	children: (wiring: ControlWiring) => React.ReactNode
}) {
	const fallbackId = useId()
	const id = controlId ?? fallbackId
	const errorId = `${id}-error`
	const hintId = hint ? `${id}-hint` : undefined
	const invalid = Boolean(errors?.length)
	const describedBy = [invalid ? errorId : null, hintId].filter(Boolean).join(' ') || undefined
	return (
		<div className={className}>
			<label htmlFor={id} className="text-ink mb-1 block text-sm font-medium">
				{label}
			</label>
			{children({ id, invalid, describedBy })}
			{hint ? (
				<p id={hintId} className="text-ink-faint mt-1 text-xs">
					{hint}
				</p>
			) : null}
			<FieldErrors id={errorId} errors={errors} />
		</div>
	)
}

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
	return (
		<LabelledControl label={label} hint={hint} errors={errors} controlId={inputProps.id} className={className}>
			{({ id, invalid, describedBy }) => (
				<input
					{...inputProps}
					id={id}
					className={cn(inputClass, inputProps.className)}
					aria-invalid={invalid || undefined}
					aria-describedby={describedBy}
				/>
			)}
		</LabelledControl>
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
	return (
		<LabelledControl label={label} hint={hint} errors={errors} controlId={textareaProps.id} className={className}>
			{({ id, invalid, describedBy }) => (
				<textarea
					{...textareaProps}
					id={id}
					className={cn(inputClass, 'min-h-24')}
					aria-invalid={invalid || undefined}
					aria-describedby={describedBy}
				/>
			)}
		</LabelledControl>
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
	return (
		<LabelledControl label={label} hint={hint} errors={errors} controlId={selectProps.id} className={className}>
			{({ id, invalid, describedBy }) => (
				<select
					{...selectProps}
					id={id}
					className={cn(inputClass, selectProps.className)}
					aria-invalid={invalid || undefined}
					aria-describedby={describedBy}
				>
					{placeholder ? <option value="">{placeholder}</option> : null}
					{options.map((option) => (
						<option key={option.value} value={option.value} disabled={option.disabled}>
							{option.label}
						</option>
					))}
				</select>
			)}
		</LabelledControl>
	)
}

export { inputClass }
