import { z } from 'zod'
import { ROLES } from '#shared/authz/permissions.ts'

/**
 * Checkbox groups arrive as nothing, a string or an array (the form also sends an empty placeholder so
 * that "no role ticked" is reported on the field); all become a list of known roles.
 */
const RolesField = z.preprocess(
	(value) => (value === undefined ? [] : Array.isArray(value) ? value : [value]).filter((role) => Boolean(role)),
	z.array(z.enum(ROLES, { message: 'Unknown role' })).min(1, 'Give the account at least one role'),
)

function isKnownTimeZone(zone: string): boolean {
	try {
		new Intl.DateTimeFormat('en', { timeZone: zone })
		return true
	} catch {
		return false
	}
}

export const CreateUserSchema = z.object({
	name: z.string({ message: 'Enter the person’s full name' }).trim().min(2, 'Enter the person’s full name').max(120),
	email: z.email({ message: 'Enter a valid e-mail address' }).trim().toLowerCase().max(200),
	password: z
		.string({ message: 'Set an initial password' })
		.min(10, 'The password needs at least 10 characters')
		.max(128, 'The password can have at most 128 characters'),
	roles: RolesField,
	timeZone: z
		.string()
		.trim()
		.default('UTC')
		.refine(isKnownTimeZone, 'Use an IANA time zone such as Europe/Dublin or UTC'),
})
export type CreateUserValues = z.infer<typeof CreateUserSchema>

export const UserAdminActionSchema = z.discriminatedUnion('intent', [
	z.object({ intent: z.literal('set-roles'), roles: RolesField }),
	z.object({
		intent: z.literal('deactivate'),
		reason: z.string().trim().min(5, 'Say why the account is deactivated').max(500),
	}),
	z.object({ intent: z.literal('reactivate') }),
	z.object({ intent: z.literal('unlock') }),
])
export type UserAdminAction = z.infer<typeof UserAdminActionSchema>
