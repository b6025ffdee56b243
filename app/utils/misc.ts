import { clsx, type ClassValue } from 'clsx'
import { twMerge } from 'tailwind-merge'

/** Joins class names and lets later Tailwind utilities win over earlier ones. */
export function cn(...inputs: Array<ClassValue>): string {
	return twMerge(clsx(inputs))
}

/** A date-time as the lab reads it: 2026-12-02 14:05 UTC. */
export function formatUtc(value: Date | string | null | undefined): string {
	if (!value) return '—'
	const date = typeof value === 'string' ? new Date(value) : value
	return `${date.toISOString().slice(0, 16).replace('T', ' ')} UTC`
}
