/**
 * What the two signatures on an identity run cover: the run's canonical record, serialised with the JSON
 * Canonicalization Scheme (RFC 8785) and hashed with SHA-256, as for specification versions (shared/specs/canonical.ts).
 */
import { canonicalJson, type JsonValue, sha256Hex } from '#shared/specs/canonical.ts'
import type { Verdict } from '#shared/spectra/compare.ts'

export const RUN_RECORD_FORMAT = 'bandproof.identity-run/1'

export type RunRecordInput = {
	runNumber: string
	material: { code: string; name: string }
	lot: { lotNumber: string; supplier: string; containerCount: number; receivedOn: string | null }
	specification: { documentNumber: string; versionNumber: number; contentSha256: string | null }
	instrument: { code: string; checkId: string; checkPerformedAt: string; checkValidUntil: string }
	retestOf: string | null
	retestReason: string | null
	recordedBy: string
	recordedAt: string
	containers: ReadonlyArray<{
		container: number
		sampleSha256: string
		sampleFileName: string
		verdict: Verdict
		correlation: number | null
		derivativeCorrelation: number | null
		algorithmVersion: string
	}>
	outcome: 'conforms' | 'flagged'
}

/** Rounds a correlation to 6 decimals so that the record does not depend on float printing. */
const round6 = (value: number | null) => (value === null ? null : Math.round(value * 1e6) / 1e6)

export function canonicalRunRecord(input: RunRecordInput): JsonValue {
	return {
		format: RUN_RECORD_FORMAT,
		runNumber: input.runNumber,
		material: { ...input.material },
		lot: { ...input.lot },
		specification: { ...input.specification },
		instrument: { ...input.instrument },
		retestOf: input.retestOf,
		retestReason: input.retestReason,
		recordedBy: input.recordedBy,
		recordedAt: input.recordedAt,
		containers: [...input.containers]
			.sort((a, b) => a.container - b.container)
			.map((row) => ({
				...row,
				correlation: round6(row.correlation),
				derivativeCorrelation: round6(row.derivativeCorrelation),
			})),
		outcome: input.outcome,
	}
}

export async function runRecordHash(input: RunRecordInput): Promise<string> {
	return sha256Hex(canonicalJson(canonicalRunRecord(input)))
}
