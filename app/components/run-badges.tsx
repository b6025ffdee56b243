import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import type { InstrumentReadiness } from '#shared/runs/instrument-readiness.ts'
import {
	DISPOSITION_LABELS,
	type LotDisposition,
	RUN_STATE_LABELS,
	type RunOutcome,
	type RunState,
} from '#shared/runs/run-rules.ts'
import type { Verdict } from '#shared/spectra/compare.ts'

const READINESS_LABELS = {
	usable: 'Usable',
	retired: 'Retired',
	'never-checked': 'Never checked',
	failed: 'Check failed',
	expired: 'Check expired',
} as const

export function ReadinessBadge({
	readiness,
}: {
	readiness: Pick<InstrumentReadiness, 'usable'> & { reason?: string }
}) {
	if (readiness.usable) return <StatusBadge tone="good">{READINESS_LABELS.usable}</StatusBadge>
	const reason = (readiness.reason ?? 'never-checked') as keyof typeof READINESS_LABELS
	return <StatusBadge tone={reason === 'retired' ? 'neutral' : 'danger'}>{READINESS_LABELS[reason]}</StatusBadge>
}

const DISPOSITION_TONES: Record<LotDisposition, 'good' | 'caution' | 'danger' | 'neutral'> = {
	untested: 'neutral',
	'in-progress': 'neutral',
	released: 'good',
	'under-investigation': 'caution',
	rejected: 'danger',
	'retest-needed': 'caution',
}

export function DispositionBadge({ disposition }: { disposition: LotDisposition }) {
	return <StatusBadge tone={DISPOSITION_TONES[disposition]}>{DISPOSITION_LABELS[disposition]}</StatusBadge>
}

export function OutcomeBadge({ outcome }: { outcome: RunOutcome }) {
	return outcome === 'conforms' ? (
		<StatusBadge tone="good">All containers conform</StatusBadge>
	) : (
		<StatusBadge tone="danger">Flagged for investigation</StatusBadge>
	)
}

export function RunStateBadge({ state }: { state: RunState }) {
	return <StatusBadge tone={state === 'verified' ? 'good' : 'neutral'}>{RUN_STATE_LABELS[state]}</StatusBadge>
}

const VERDICT_LABELS: Record<Verdict, string> = {
	conforms: 'Conforms',
	'does-not-conform': 'Does not conform',
	inconclusive: 'Inconclusive',
}

export function VerdictBadge({ verdict }: { verdict: string }) {
	const known = verdict as Verdict
	const tone = known === 'conforms' ? 'good' : known === 'inconclusive' ? 'caution' : 'danger'
	return <StatusBadge tone={tone}>{VERDICT_LABELS[known] ?? verdict}</StatusBadge>
}
