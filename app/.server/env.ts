import { z } from 'zod'

const EnvSchema = z.object({
	NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
	DATABASE_URL: z.string().url({ message: 'DATABASE_URL must be a postgres:// URL' }),
	BETTER_AUTH_SECRET: z.string().min(32).optional(),
	BETTER_AUTH_URL: z.string().url().optional(),
	/** Minutes of inactivity after which a session ends. */
	SESSION_IDLE_MINUTES: z.coerce
		.number()
		.int()
		.min(1)
		.max(24 * 60)
		.default(30),
	/** Consecutive failed sign-ins that lock an account. */
	LOCKOUT_THRESHOLD: z.coerce.number().int().min(1).max(100).default(5),
	/** Minutes an account stays locked (an admin can unlock sooner). */
	LOCKOUT_MINUTES: z.coerce.number().int().min(1).default(30),
	/**
	 * Requests to /api/v1 allowed per API key in any window of API_RATE_LIMIT_WINDOW_SECONDS: 120 a minute is two a
	 * second, plenty for a lab's scripts (common practice, no source). The load benchmark raises it.
	 */
	API_RATE_LIMIT_PER_KEY: z.coerce.number().int().min(1).max(1_000_000_000).default(120),
	/** Requests to /api/v1 without a valid key allowed per client address in the same window. */
	API_RATE_LIMIT_PER_ADDRESS: z.coerce.number().int().min(1).max(1_000_000_000).default(30),
	/** The sliding window of both API limits, in seconds. */
	API_RATE_LIMIT_WINDOW_SECONDS: z.coerce.number().int().min(1).max(86_400).default(60),
})

export type Env = z.infer<typeof EnvSchema>

let cached: Env | null = null

/** Reads and validates the environment once; throws a readable message when it is incomplete. */
export function env(): Env {
	if (cached) return cached
	const parsed = EnvSchema.safeParse(process.env)
	if (!parsed.success) {
		const lines = parsed.error.issues.map((issue) => `${issue.path.join('.')}: ${issue.message}`)
		throw new Error(`Invalid environment:\n${lines.join('\n')}`)
	}
	cached = parsed.data
	return cached
}
