import { FieldErrors } from '#app/components/forms.tsx'
import { ROLE_DUTIES, ROLE_LABELS, ROLES, type Role } from '#shared/authz/permissions.ts'

/** The roles of an account as a labelled group of checkboxes. */
export function RoleCheckboxes({
	name,
	defaultRoles,
	errors,
	errorId,
}: {
	name: string
	defaultRoles: ReadonlyArray<Role | string>
	errors?: Array<string>
	errorId: string
}) {
	return (
		<fieldset aria-describedby={errors?.length ? errorId : undefined}>
			<legend className="mb-2 text-sm font-medium">Roles</legend>
			<input type="hidden" name={name} value="" />
			<div className="grid gap-2 sm:grid-cols-2">
				{ROLES.map((role) => (
					<label key={role} className="border-rule hover:bg-paper flex items-start gap-2 rounded-md border p-2 text-sm">
						<input
							type="checkbox"
							name={name}
							value={role}
							defaultChecked={defaultRoles.includes(role)}
							className="accent-accent mt-0.5"
						/>
						<span>
							<span className="font-medium">{ROLE_LABELS[role]}</span>
							<span className="text-ink-faint block text-xs">{ROLE_DUTIES[role]}</span>
						</span>
					</label>
				))}
			</div>
			<FieldErrors id={errorId} errors={errors} />
		</fieldset>
	)
}
