/**
 * Whether an instrument may be used for identity runs at a given moment: its latest polystyrene check must have
 * passed and must still be inside its validity period. Pure; the server asks it before recording a run.
 */

export type CheckSummary = { id: string; passed: boolean; performedAt: Date; validUntil: Date }

export type InstrumentReadiness =
	| { usable: true; check: CheckSummary; message: string }
	| {
			usable: false
			reason: 'retired' | 'never-checked' | 'failed' | 'expired'
			check: CheckSummary | null
			/** What is wrong and what to do, in plain words. */
			message: string
	  }

const day = (date: Date) => date.toISOString().slice(0, 10)

/** `latest` is the instrument's most recent check by performedAt (any outcome). */
export function instrumentReadiness(
	instrument: { code: string; retiredAt: Date | null },
	latest: CheckSummary | null,
	now: Date,
): InstrumentReadiness {
	if (instrument.retiredAt && instrument.retiredAt <= now) {
		return {
			usable: false,
			reason: 'retired',
			check: latest,
			message: `${instrument.code} is retired and cannot be used for identity runs. Choose another instrument.`,
		}
	}
	if (!latest) {
		return {
			usable: false,
			reason: 'never-checked',
			check: null,
			message: `${instrument.code} has no polystyrene check on record. Record a passing check before using it for identity runs.`,
		}
	}
	if (!latest.passed) {
		return {
			usable: false,
			reason: 'failed',
			check: latest,
			message: `The last polystyrene check of ${instrument.code} (${day(latest.performedAt)}) failed. Have the instrument serviced or re-checked and record a passing check before using it.`,
		}
	}
	if (latest.validUntil <= now) {
		return {
			usable: false,
			reason: 'expired',
			check: latest,
			message: `The polystyrene check of ${instrument.code} expired on ${day(latest.validUntil)}. Record a new check before using it for identity runs.`,
		}
	}
	return {
		usable: true,
		check: latest,
		message: `Check passed on ${day(latest.performedAt)}, valid until ${day(latest.validUntil)}.`,
	}
}

/** End of a check's validity: performedAt plus the instrument's validity period in days. */
export function checkValidUntil(performedAt: Date, validityDays: number): Date {
	return new Date(performedAt.getTime() + validityDays * 24 * 60 * 60 * 1000)
}
