/**
 * The demo lab's release testing: three FTIR instruments with their polystyrene checks, and incoming lots of the
 * two effective specifications tested container by container over the past weeks, recorded, signed and verified
 * through the same services the pages use. Every spectrum is synthetic (scripts/demo-spectra.ts): demo data only.
 *
 * What a visitor finds:
 * - IR-02 usable (its check passed three days ago), IR-01 whose check expired ten days ago, IR-03 whose last check
 *   failed yesterday (its wavenumber scale reads high);
 * - paracetamol lot H-24168 from Halden Chemie with its identity confirmed (recorded and signed by one analyst,
 *   verified by the other), and lot H-24179 under investigation: container 3 holds another material;
 * - six older paracetamol lots from two suppliers, the lots of Orwell Fine Synthesis carrying more moisture each
 *   time (a broad O–H band at 3450 cm⁻¹), so the trend of their correlations drifts towards the threshold while
 *   Halden's stays flat; two isopropyl alcohol lots.
 */
import type { Db } from '#app/.server/db/client.ts'
import { recordIdentityRun, signIdentityRun } from '#app/.server/services/identity-runs.ts'
import { recordInstrumentCheck, registerInstrument } from '#app/.server/services/instruments.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import type { InstrumentFormValues } from '#shared/runs/forms.ts'
import { demoJcamp, demoPolystyreneJcamp, type DemoSpectrumOptions } from './demo-spectra.ts'

const DAY = 86_400_000

type InstrumentCode = 'IR-01' | 'IR-02' | 'IR-03'

const INSTRUMENTS: Record<InstrumentCode, InstrumentFormValues> = {
	'IR-01': {
		code: 'IR-01',
		name: 'FTIR bench 1, diamond ATR',
		serialNumber: 'CV-FT-0417',
		location: 'QC lab, room 1.12',
		checkValidityDays: 30,
		checkTable: 'ph-eur-ft',
	},
	'IR-02': {
		code: 'IR-02',
		name: 'FTIR bench 2, diamond ATR',
		serialNumber: 'CV-FT-0522',
		location: 'QC lab, room 1.14',
		checkValidityDays: 30,
		checkTable: 'ph-eur-ft',
	},
	'IR-03': {
		code: 'IR-03',
		name: 'FTIR bench 3, diamond ATR',
		serialNumber: 'CV-FT-0388',
		location: 'Stability lab, room 2.03',
		checkValidityDays: 30,
		checkTable: 'ph-eur-ft',
	},
}

/** Polystyrene checks, oldest first: [instrument, days ago, hour (UTC), scale error of the film spectrum]. */
const CHECKS: ReadonlyArray<{ instrument: InstrumentCode; daysAgo: number; hour: number; scaleError?: number }> = [
	{ instrument: 'IR-03', daysAgo: 35, hour: 8 },
	{ instrument: 'IR-02', daysAgo: 31, hour: 8 },
	// Valid for 30 days: expired ten days ago, and nobody has checked IR-01 since.
	{ instrument: 'IR-01', daysAgo: 40, hour: 8 },
	{ instrument: 'IR-02', daysAgo: 3, hour: 8 },
	// 7e-4 reads every band high in proportion to its wavenumber: 3060.0 comes out 2.1 cm⁻¹ high (limit ±1.0).
	{ instrument: 'IR-03', daysAgo: 1, hour: 8, scaleError: 7e-4 },
]

const CHECK_NOTES: Record<string, string> = {
	pass: 'Routine check with the lab film PS-03.',
	fail: 'Bands read high across the range; the instrument is out of use and a service visit is booked.',
}

const SUPPLIERS = { halden: 'Halden Chemie', orwell: 'Orwell Fine Synthesis', brennet: 'Brennet Solvents' } as const

type DemoLot = {
	specification: 'paracetamol' | 'isopropylAlcohol'
	lotNumber: string
	supplier: keyof typeof SUPPLIERS
	containers: number
	daysAgo: number
	hour: number
	instrument: InstrumentCode
	/** Index into the two demo analysts of the one who records and signs; the other verifies. */
	analyst: 0 | 1
	/** Height of a broad moisture band at 3450 cm⁻¹ in every container (the drifting supplier). */
	moisture?: number
	/** A container filled with another material: the run is flagged and the investigation stays open. */
	wrongContainer?: number
}

const LOTS: ReadonlyArray<DemoLot> = [
	{
		specification: 'paracetamol',
		lotNumber: 'H-24117',
		supplier: 'halden',
		containers: 4,
		daysAgo: 38,
		hour: 9,
		instrument: 'IR-01',
		analyst: 0,
	},
	{
		specification: 'paracetamol',
		lotNumber: 'OFS-5521',
		supplier: 'orwell',
		containers: 3,
		daysAgo: 33,
		hour: 10,
		instrument: 'IR-01',
		analyst: 1,
		moisture: 0.02,
	},
	{
		specification: 'paracetamol',
		lotNumber: 'H-24131',
		supplier: 'halden',
		containers: 4,
		daysAgo: 27,
		hour: 9,
		instrument: 'IR-03',
		analyst: 0,
	},
	{
		specification: 'paracetamol',
		lotNumber: 'OFS-5538',
		supplier: 'orwell',
		containers: 3,
		daysAgo: 22,
		hour: 13,
		instrument: 'IR-01',
		analyst: 0,
		moisture: 0.06,
	},
	{
		specification: 'isopropylAlcohol',
		lotNumber: 'BS-7702',
		supplier: 'brennet',
		containers: 3,
		daysAgo: 20,
		hour: 11,
		instrument: 'IR-02',
		analyst: 1,
	},
	{
		specification: 'paracetamol',
		lotNumber: 'H-24150',
		supplier: 'halden',
		containers: 4,
		daysAgo: 16,
		hour: 10,
		instrument: 'IR-02',
		analyst: 1,
	},
	{
		specification: 'paracetamol',
		lotNumber: 'OFS-5560',
		supplier: 'orwell',
		containers: 3,
		daysAgo: 11,
		hour: 9,
		instrument: 'IR-01',
		analyst: 0,
		moisture: 0.1,
	},
	{
		specification: 'isopropylAlcohol',
		lotNumber: 'BS-7730',
		supplier: 'brennet',
		containers: 3,
		daysAgo: 9,
		hour: 14,
		instrument: 'IR-02',
		analyst: 0,
	},
	{
		specification: 'paracetamol',
		lotNumber: 'OFS-5574',
		supplier: 'orwell',
		containers: 3,
		daysAgo: 6,
		hour: 10,
		instrument: 'IR-02',
		analyst: 1,
		moisture: 0.14,
	},
	// The released lot and the lot under investigation that the README points visitors to.
	{
		specification: 'paracetamol',
		lotNumber: 'H-24168',
		supplier: 'halden',
		containers: 5,
		daysAgo: 4,
		hour: 9,
		instrument: 'IR-02',
		analyst: 0,
	},
	{
		specification: 'paracetamol',
		lotNumber: 'H-24179',
		supplier: 'halden',
		containers: 4,
		daysAgo: 2,
		hour: 10,
		instrument: 'IR-02',
		analyst: 0,
		wrongContainer: 3,
	},
]

/** The demo material whose bands a specification's containers carry; acetanilide is the mix-up (a close relative). */
const MATERIAL_CODE = { paracetamol: 'RM-0102', isopropylAlcohol: 'RM-0108' } as const
const WRONG_MATERIAL_CODE = 'RM-0110'

function must<T>(outcome: { ok: true; value: T } | { ok: false; error: Error }): T {
	if (!outcome.ok) throw outcome.error
	return outcome.value
}

/** A container's sample: a replicate with its own noise, a slight shift and sample amount, so its bytes are its own. */
function containerSample(lot: DemoLot, lotIndex: number, container: number): Uint8Array {
	const seed = 5000 + lotIndex * 100 + container
	const wrong = lot.wrongContainer === container
	const code = wrong ? WRONG_MATERIAL_CODE : MATERIAL_CODE[lot.specification]
	const moisture = lot.moisture === undefined ? 0 : lot.moisture + ((container % 3) - 1) * 0.005
	const options: DemoSpectrumOptions = {
		seed,
		shift: (((container * 3 + lotIndex * 2) % 7) - 3) * 0.1,
		scale: 1 + (((container * 5 + lotIndex) % 9) - 4) * 0.012,
		extraBands: moisture > 0 ? [{ position: 3450, height: moisture, fwhm: 250 }] : [],
	}
	return demoJcamp(code, `Lot ${lot.lotNumber}, container ${container}`, options)
}

/**
 * Registers the instruments and replays the checks and runs in time order: a run asks the instrument's latest
 * check, so nothing may be recorded before something older. `specifications` are the ids of the effective ones.
 */
export async function seedInstrumentsAndRuns(
	db: Db,
	lab: {
		now: Date
		admin: Actor
		analysts: readonly [Actor, Actor]
		specifications: { paracetamol: string; isopropylAlcohol: string }
	},
): Promise<void> {
	const { now, analysts } = lab
	/** `daysAgo` ≥ 1, so any hour of that UTC day lies before `now`. */
	const at = (daysAgo: number, hour: number, minute = 0) => {
		const date = new Date(now.getTime() - daysAgo * DAY)
		date.setUTCHours(hour, minute, 0, 0)
		return date
	}
	const instrumentIds = new Map<InstrumentCode, string>()
	for (const values of Object.values(INSTRUMENTS)) {
		const { id } = must(await registerInstrument(db, { actor: lab.admin, values, now: at(62, 9) }))
		instrumentIds.set(values.code as InstrumentCode, id)
	}

	type Step = { when: Date; apply: () => Promise<void> }
	const steps: Array<Step> = []
	CHECKS.forEach((check, index) => {
		const when = at(check.daysAgo, check.hour, 15)
		steps.push({
			when,
			apply: async () => {
				const day = when.toISOString().slice(0, 10)
				const recorded = must(
					await recordInstrumentCheck(db, {
						actor: analysts[index % 2]!,
						instrumentId: instrumentIds.get(check.instrument)!,
						fileName: `${check.instrument.toLowerCase()}_polystyrene_${day}.jdx`,
						bytes: demoPolystyreneJcamp(`Polystyrene film PS-03 on ${check.instrument}, ${day}`, {
							seed: 900 + index,
							scaleError: check.scaleError,
						}),
						notes: check.scaleError ? CHECK_NOTES['fail']! : CHECK_NOTES['pass']!,
						now: when,
					}),
				)
				if (recorded.passed === Boolean(check.scaleError)) {
					throw new Error(`demo check of ${check.instrument} ${day} came out ${recorded.passed ? 'passed' : 'failed'}`)
				}
			},
		})
	})
	LOTS.forEach((lot, lotIndex) => {
		const when = at(lot.daysAgo, lot.hour, 5)
		steps.push({
			when,
			apply: async () => {
				const performer = analysts[lot.analyst]
				const verifier = analysts[1 - lot.analyst]!
				const files = Array.from({ length: lot.containers }, (_, index) => ({
					fileName: `${lot.lotNumber}-C${String(index + 1).padStart(2, '0')}.jdx`,
					bytes: containerSample(lot, lotIndex, index + 1),
				}))
				const run = must(
					await recordIdentityRun(db, {
						kind: 'first',
						actor: performer,
						specificationId: lab.specifications[lot.specification],
						lot: {
							lotNumber: lot.lotNumber,
							supplier: SUPPLIERS[lot.supplier],
							containerCount: lot.containers,
							receivedOn: at(lot.daysAgo + 1, 12)
								.toISOString()
								.slice(0, 10),
						},
						instrumentId: instrumentIds.get(lot.instrument)!,
						files,
						now: when,
					}),
				)
				const expected = lot.wrongContainer ? 'flagged' : 'conforms'
				if (run.outcome !== expected) throw new Error(`demo lot ${lot.lotNumber} came out ${run.outcome}`)
				const minutes = (n: number) => new Date(when.getTime() + n * 60_000)
				must(
					await signIdentityRun(db, { actor: performer, runId: run.runId, intent: 'sign-performed', now: minutes(40) }),
				)
				must(await signIdentityRun(db, { actor: verifier, runId: run.runId, intent: 'verify', now: minutes(200) }))
			},
		})
	})
	steps.sort((a, b) => a.when.getTime() - b.when.getTime())
	for (const step of steps) await step.apply()
}
