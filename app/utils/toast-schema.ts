import { z } from 'zod'

export const ToastSchema = z.object({
	kind: z.enum(['success', 'info', 'error']).default('success'),
	title: z.string().max(200),
	description: z.string().max(500).optional(),
})
export type Toast = z.infer<typeof ToastSchema>
