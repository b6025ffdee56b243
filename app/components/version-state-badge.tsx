import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { VERSION_STATE_LABELS, VERSION_STATE_TONES, type VersionState } from '#shared/specs/state-labels.ts'

export function VersionStateBadge({ state }: { state: VersionState }) {
	return <StatusBadge tone={VERSION_STATE_TONES[state]}>{VERSION_STATE_LABELS[state]}</StatusBadge>
}
