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

/**
 * The JSON object both signatures on a run cover. Every field is picked by name, as for specification versions, so
 * that a caller passing a wider object (a database row with ids, stored evidence…) cannot change what is hashed.
 * Containers are ordered by number; correlations are rounded to 6 decimals. Pure.
 */
export function canonicalRunRecord(input: RunRecordInput): JsonValue {
	const { material, lot, specification, instrument } = input
	return {
		format: RUN_RECORD_FORMAT,
		runNumber: input.runNumber,
		material: { code: material.code, name: material.name },
		lot: {
			lotNumber: lot.lotNumber,
			supplier: lot.supplier,
			containerCount: lot.containerCount,
			receivedOn: lot.receivedOn,
		},
		specification: {
			documentNumber: specification.documentNumber,
			versionNumber: specification.versionNumber,
			contentSha256: specification.contentSha256,
		},
		instrument: {
			code: instrument.code,
			checkId: instrument.checkId,
			checkPerformedAt: instrument.checkPerformedAt,
			checkValidUntil: instrument.checkValidUntil,
		},
		retestOf: input.retestOf,
		retestReason: input.retestReason,
		recordedBy: input.recordedBy,
		recordedAt: input.recordedAt,
		containers: [...input.containers]
			.sort((a, b) => a.container - b.container)
			.map((row) => ({
				container: row.container,
				sampleSha256: row.sampleSha256,
				sampleFileName: row.sampleFileName,
				verdict: row.verdict,
				correlation: round6(row.correlation),
				derivativeCorrelation: round6(row.derivativeCorrelation),
				algorithmVersion: row.algorithmVersion,
			})),
		outcome: input.outcome,
	}
}

export async function runRecordHash(input: RunRecordInput): Promise<string> {
	return sha256Hex(canonicalJson(canonicalRunRecord(input)))
}
