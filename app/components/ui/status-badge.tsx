import { cn } from '#app/utils/misc.ts'

const TONES = {
	good: 'bg-good-soft text-good',
	caution: 'bg-caution-soft text-caution',
	danger: 'bg-danger-soft text-danger',
	neutral: 'bg-paper text-ink-soft border border-rule',
} as const

/** A short state word with a tone; the word itself carries the meaning (never colour alone). */
export function StatusBadge({ tone, children }: { tone: keyof typeof TONES; children: React.ReactNode }) {
	return <span className={cn('inline-block rounded px-2 py-0.5 text-xs font-medium', TONES[tone])}>{children}</span>
}
