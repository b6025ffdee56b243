/**
 * A small release-testing lab for integration tests: an effective specification (4-chloroaniline, real reference
 * spectrum of the shared set), two analysts, an approver, an instrument and (unless `film` is null) one polystyrene
 * check of it.
 */
import { expect } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { recordInstrumentCheck, registerInstrument } from '#app/.server/services/instruments.ts'
import { replicateOf } from '#tests/support/container-samples.ts'
import { makeActor, makeSignedVersion } from '#tests/support/factories.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

/** Real polystyrene films of the shared set (SOURCES.md): a transmission film that passes, an ATR film that does not. */
export const GOOD_FILM = 'polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx'
export const ATR_FILM = 'polystyrene/ps_film_atr_diamond_nrcan.csv'

export type ReleaseLab = Awaited<ReturnType<typeof makeReleaseLab>>

let filmSeed = 0

/**
 * A lab set-up: an effective specification, two analysts, an instrument and (unless `film` is null) one check.
 * The default film is a replicate of the real PE 1600 film (a new measurement each time: the library refuses the
 * same bytes twice); 'real' stores the real file itself.
 */
export async function makeReleaseLab(options: { film?: 'replicate' | 'real' | 'atr' | null; checkedAt?: Date } = {}) {
	const people = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const analyst = await makeActor(db, 'analyst')
	const secondAnalyst = await makeActor(db, 'analyst')
	const admin = await makeActor(db, 'admin')
	const version = await makeSignedVersion(db, people)
	expect(version.state).toBe('effective')
	const code = `IR-${Math.random().toString(36).slice(2, 8)}`
	const instrument = await registerInstrument(db, {
		actor: admin,
		values: {
			code,
			name: 'Bench FTIR',
			serialNumber: null,
			location: 'QC lab 2',
			checkValidityDays: 30,
			checkTable: 'ph-eur-ft',
		},
		now: new Date(),
	})
	if (!instrument.ok) throw instrument.error
	let check = null
	if (options.film !== null) {
		const film = options.film ?? 'replicate'
		const bytes =
			film === 'replicate'
				? replicateOf(GOOD_FILM, 9000 + ++filmSeed, 0.001)
				: readReferenceFile(film === 'real' ? GOOD_FILM : ATR_FILM)
		const recorded = await recordInstrumentCheck(db, {
			actor: analyst,
			instrumentId: instrument.value.id,
			fileName: film === 'atr' ? 'ps-film-atr.csv' : `ps-film-${filmSeed}.jdx`,
			bytes,
			notes: null,
			now: options.checkedAt ?? new Date(),
		})
		if (!recorded.ok) throw recorded.error
		check = recorded.value
	}
	return { people, analyst, secondAnalyst, admin, version, instrumentId: instrument.value.id, check }
}
