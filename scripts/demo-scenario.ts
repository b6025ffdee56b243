import { count, eq } from 'drizzle-orm'
import type { Database, Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { SYSTEM_ACTOR } from '#app/.server/services/audit.ts'
import { createMaterial } from '#app/.server/services/materials.ts'
import { createUser } from '#app/.server/services/users.ts'
import { specVersions } from '#app/.server/db/schema/specifications.ts'
import { getDossier } from '#app/.server/services/dossiers.ts'
import { createGrant } from '#app/.server/services/grants.ts'
import { addRedline } from '#app/.server/services/redlines.ts'
import { applyDueEffectiveDates, takeWorkflowStep } from '#app/.server/services/spec-workflow.ts'
import {
	createSpecification,
	parseContent,
	recordComparison,
	recordSpecificity,
	saveDraft,
	startNextVersion,
} from '#app/.server/services/specifications.ts'
import { loadSpectrum, storeSpectrumFile } from '#app/.server/services/spectra.ts'
import { suggestBandRows } from '#app/.server/services/spectrum-analysis.ts'
import type { Actor, Role } from '#shared/authz/permissions.ts'
import type { SpecVersionContent } from '#shared/specs/version-content.ts'
import { seedInstrumentsAndRuns } from './demo-runs.ts'
import { DEMO_BANDS, demoJcamp } from './demo-spectra.ts'

/**
 * The demo scenario: the incoming-materials QC laboratory of Calder Vale Pharmaceuticals, a fictional
 * maker of oral solid doses. Invented people; real substances with their real CAS Registry Numbers.
 */
export const DEMO_PASSWORD = 'calder-vale-demo'

export const DEMO_PEOPLE: Array<{ email: string; name: string; roles: Array<Role>; timeZone: string }> = [
	{ email: 'author@bandproof.test', name: 'Maren Oduya', roles: ['author'], timeZone: 'Europe/London' },
	{ email: 'reviewer@bandproof.test', name: 'Tomasz Wielgosz', roles: ['reviewer'], timeZone: 'Europe/Warsaw' },
	{ email: 'approver@bandproof.test', name: 'Ilse Brandvold', roles: ['approver'], timeZone: 'Europe/Oslo' },
	{ email: 'analyst@bandproof.test', name: 'Nadia Haddad', roles: ['analyst'], timeZone: 'Europe/London' },
	{ email: 'analyst2@bandproof.test', name: 'Cormac Delaney', roles: ['analyst'], timeZone: 'Europe/Dublin' },
	{ email: 'inspector@bandproof.test', name: 'Rafael Quintero', roles: ['inspector'], timeZone: 'America/New_York' },
	{ email: 'admin@bandproof.test', name: 'Priya Ramanathan', roles: ['admin'], timeZone: 'Europe/London' },
]

const DEMO_MATERIALS = [
	{
		code: 'RM-0101',
		name: 'Acetylsalicylic acid',
		synonyms: 'Aspirin',
		casNumber: '50-78-2',
		formula: 'C9H8O4',
		grade: 'Ph. Eur.',
	},
	{
		code: 'RM-0102',
		name: 'Paracetamol',
		synonyms: 'Acetaminophen; 4-Hydroxyacetanilide',
		casNumber: '103-90-2',
		formula: 'C8H9NO2',
		grade: 'Ph. Eur.',
	},
	{
		code: 'RM-0103',
		name: 'Caffeine, anhydrous',
		synonyms: '',
		casNumber: '58-08-2',
		formula: 'C8H10N4O2',
		grade: 'USP',
	},
	{
		code: 'RM-0104',
		name: 'Lactose monohydrate',
		synonyms: '',
		casNumber: '64044-51-5',
		formula: 'C12H22O11·H2O',
		grade: 'Ph. Eur.',
	},
	{
		code: 'RM-0105',
		name: 'Microcrystalline cellulose',
		synonyms: 'MCC',
		casNumber: '9004-34-6',
		formula: '(C6H10O5)n',
		grade: 'Ph. Eur.',
	},
	{
		code: 'RM-0106',
		name: 'Magnesium stearate',
		synonyms: '',
		casNumber: '557-04-0',
		formula: 'Mg(C18H35O2)2',
		grade: 'Ph. Eur.',
	},
	{
		code: 'RM-0107',
		name: 'Ethyl acetate',
		synonyms: 'Ethyl ethanoate',
		casNumber: '141-78-6',
		formula: 'C4H8O2',
		grade: 'Ph. Eur.',
	},
	{
		code: 'RM-0108',
		name: 'Isopropyl alcohol',
		synonyms: '2-Propanol; Isopropanol',
		casNumber: '67-63-0',
		formula: 'C3H8O',
		grade: 'Ph. Eur.',
	},
	{ code: 'RM-0109', name: 'Benzaldehyde', synonyms: '', casNumber: '100-52-7', formula: 'C7H6O', grade: 'Technical' },
	{
		code: 'RM-0110',
		name: 'Acetanilide',
		synonyms: 'N-Phenylacetamide',
		casNumber: '103-84-4',
		formula: 'C8H9NO',
		grade: 'Technical',
	},
]

/**
 * Seeds the demo scenario into an empty database; does nothing when any account exists. All or nothing: one
 * transaction, so an interrupted seed leaves an empty database that the next start seeds again.
 */
export async function seedDemoScenario(database: Database, now = new Date()): Promise<{ seeded: boolean }> {
	return database.transaction((tx) => seedInto(tx, now))
}

async function seedInto(db: Db, now: Date): Promise<{ seeded: boolean }> {
	const [existing] = await db.select({ n: count() }).from(users)
	if ((existing?.n ?? 0) > 0) return { seeded: false }
	const ids = new Map<string, string>()
	for (const person of DEMO_PEOPLE) {
		const outcome = await createUser(db, { actor: SYSTEM_ACTOR, values: { ...person, password: DEMO_PASSWORD }, now })
		if (!outcome.ok) throw outcome.error
		ids.set(person.email, outcome.value.id)
	}
	const actorOf = (email: string): Actor => {
		const person = DEMO_PEOPLE.find((candidate) => candidate.email === email)!
		return { id: ids.get(email)!, name: person.name, email, roles: person.roles }
	}
	const author = actorOf('author@bandproof.test')
	const materialIds = new Map<string, string>()
	for (const material of DEMO_MATERIALS) {
		const outcome = await createMaterial(db, { actor: author, values: material, now: daysBefore(now, 240) })
		if (!outcome.ok) throw outcome.error
		materialIds.set(material.code, outcome.value.id)
	}
	const specificationIds = await seedLibraryAndSpecifications(db, {
		now,
		author,
		reviewer: actorOf('reviewer@bandproof.test'),
		approver: actorOf('approver@bandproof.test'),
		materialIds,
	})
	await seedInstrumentsAndRuns(db, {
		now,
		admin: actorOf('admin@bandproof.test'),
		analysts: [actorOf('analyst@bandproof.test'), actorOf('analyst2@bandproof.test')],
		specifications: specificationIds,
	})
	return { seeded: true }
}

function daysBefore(now: Date, days: number): Date {
	return new Date(now.getTime() - days * 86_400_000)
}

function must<T>(outcome: { ok: true; value: T } | { ok: false; error: Error }): T {
	if (!outcome.ok) throw outcome.error
	return outcome.value
}

const STANDARDS: Record<string, string> = {
	'RM-0101': 'Acetylsalicylic acid CRS',
	'RM-0102': 'Paracetamol CRS',
	'RM-0107': 'Ethyl acetate, in-house standard',
	'RM-0108': 'Isopropyl alcohol, in-house standard',
	'RM-0109': 'Benzaldehyde, in-house standard',
	'RM-0110': 'Acetanilide, in-house standard',
}

/**
 * The demo lab's library (synthetic spectra: two replicate references and one incoming-lot sample per
 * material) and four specifications in different states, built through the same services people use. Returns the
 * ids of the two effective specifications, which the demo's identity runs test against.
 */
async function seedLibraryAndSpecifications(
	db: Db,
	lab: { now: Date; author: Actor; reviewer: Actor; approver: Actor; materialIds: Map<string, string> },
) {
	const { now, author, reviewer, approver } = lab
	const spectrumIds = new Map<string, { reference: string; replicate: string; sample: string }>()
	let seed = 11
	for (const code of Object.keys(DEMO_BANDS)) {
		const materialId = lab.materialIds.get(code)!
		const upload = async (
			fileName: string,
			bytes: Uint8Array,
			purpose: 'reference' | 'sample',
			acquired: number,
			lot: string | null,
		) => {
			const outcome = await storeSpectrumFile(db, {
				actor: author,
				fileName,
				bytes,
				metadata: {
					purpose,
					materialId,
					technique: 'ATR (diamond, single bounce)',
					instrument: 'FTIR bench 2 (QC lab, room 1.14)',
					resolution: 4,
					acquiredOn: daysBefore(now, acquired).toISOString().slice(0, 10),
					referenceStandardName: purpose === 'reference' ? (STANDARDS[code] ?? null) : null,
					referenceStandardLot: lot,
					notes: purpose === 'sample' ? 'Incoming lot, container 1 of 4.' : null,
				},
				now: daysBefore(now, acquired),
			})
			if (outcome.status !== 'stored') throw new Error(`demo spectrum ${fileName}: ${outcome.status}`)
			return outcome.spectrumId
		}
		const slug = code.toLowerCase()
		spectrumIds.set(code, {
			reference: await upload(
				`${slug}_reference_a.jdx`,
				demoJcamp(code, `${STANDARDS[code]} — reference A`, { seed: seed++ }),
				'reference',
				230,
				'RS-24-017',
			),
			replicate: await upload(
				`${slug}_reference_b.jdx`,
				demoJcamp(code, `${STANDARDS[code]} — reference B`, { seed: seed++, shift: 0.4, scale: 0.97 }),
				'reference',
				229,
				'RS-24-017',
			),
			sample: await upload(
				`${slug}_lot_2611-04_c1.jdx`,
				demoJcamp(code, `${code} incoming lot 2611-04, container 1`, { seed: seed++, shift: -0.6, scale: 1.05 }),
				'sample',
				20,
				null,
			),
		})
	}

	const draftWith = async (
		code: string,
		title: string,
		versionId: string,
		at: Date,
		changes: (content: SpecVersionContent) => SpecVersionContent,
		changeReason: string | null = null,
	) => {
		const [version] = await db.select().from(specVersions).where(eq(specVersions.id, versionId))
		const spectra = spectrumIds.get(code)!
		const reference = (await loadSpectrum(db, spectra.reference))!
		let content: SpecVersionContent = {
			...parseContent(version!.content),
			scope: `Identity of every incoming container of ${title.toLowerCase()} from approved suppliers, before release to production.`,
			referenceSpectrumId: spectra.reference,
			method: {
				technique: 'ATR',
				rangeFrom: 650,
				rangeTo: 4000,
				resolution: 4,
				scans: 32,
				samplePreparation:
					'Place a small amount of the sample on the diamond crystal, apply the pressure clamp until the strongest band reads about 0.5–1.0 absorbance, record against an air background taken within the previous 30 minutes.',
			},
		}
		const suggested = suggestBandRows(reference.spectrum, content)
		content = {
			...content,
			bands: suggested.rows.map((row, index) => ({
				id: `demo-${code}-${index + 1}`,
				position: row.position,
				tolerance: null,
				assignment: row.assignment,
				intensityClass: row.intensityClass,
				shape: row.shape,
				required: row.required,
			})),
		}
		content = changes(content)
		must(await saveDraft(db, { actor: author, versionId, revision: version!.revision, content, changeReason, now: at }))
		must(await recordComparison(db, { actor: author, versionId, sampleSpectrumId: spectra.replicate, now: at }))
		must(await recordComparison(db, { actor: author, versionId, sampleSpectrumId: spectra.sample, now: at }))
		must(await recordSpecificity(db, { actor: author, versionId, now: at }))
	}
	const signThrough = async (versionId: string, at: Date, effectiveFrom: Date) => {
		must(await takeWorkflowStep(db, { actor: author, versionId, event: { type: 'submit' }, now: at }))
		must(
			await takeWorkflowStep(db, {
				actor: reviewer,
				versionId,
				event: { type: 'sign', meaning: 'reviewed', reauthenticated: true },
				now: new Date(at.getTime() + 86_400_000),
			}),
		)
		must(
			await takeWorkflowStep(db, {
				actor: approver,
				versionId,
				event: { type: 'sign', meaning: 'approved', reauthenticated: true, effectiveFrom },
				now: new Date(at.getTime() + 2 * 86_400_000),
			}),
		)
		// The server's clock applies effective dates as they come; here the seed plays that part.
		await applyDueEffectiveDates(db, new Date(effectiveFrom.getTime() + 60_000))
	}
	const pattern = 'QC-IR-{seq:4}'

	// 1. Paracetamol: version 1 effective, then superseded by version 2 (tighter criteria).
	const paracetamol = must(
		await createSpecification(db, {
			actor: author,
			materialId: lab.materialIds.get('RM-0102')!,
			title: 'Identification of paracetamol by ATR-FTIR',
			now: daysBefore(now, 220),
			pattern,
		}),
	)
	await draftWith('RM-0102', 'Paracetamol', paracetamol.versionId, daysBefore(now, 219), (content) => content)
	await signThrough(paracetamol.versionId, daysBefore(now, 215), daysBefore(now, 210))
	const second = must(
		await startNextVersion(db, {
			actor: author,
			specificationId: paracetamol.specificationId,
			changeReason: 'Tighten the minimum correlation after the specificity review and add a derivative criterion.',
			now: daysBefore(now, 60),
		}),
	)
	await draftWith(
		'RM-0102',
		'Paracetamol',
		second.versionId,
		daysBefore(now, 59),
		(content) => ({
			...content,
			scope: `${content.scope} Applies to both approved suppliers (Halden Chemie and Orwell Fine Synthesis).`,
			criteria: {
				...content.criteria,
				minCorrelation: 0.98,
				minDerivativeCorrelation: 0.9,
				thresholdJustification:
					'Replicate reference measurements correlate above 0.999; the nearest other material in the library (isopropyl alcohol) stays below 0.75. 0.98 leaves a wide margin on both sides.',
			},
		}),
		'Tighten the minimum correlation after the specificity review and add a derivative criterion.',
	)
	await signThrough(second.versionId, daysBefore(now, 50), daysBefore(now, 45))

	// 2. Isopropyl alcohol: one effective version.
	const ipa = must(
		await createSpecification(db, {
			actor: author,
			materialId: lab.materialIds.get('RM-0108')!,
			title: 'Identification of isopropyl alcohol by ATR-FTIR',
			now: daysBefore(now, 120),
			pattern,
		}),
	)
	await draftWith('RM-0108', 'Isopropyl alcohol', ipa.versionId, daysBefore(now, 119), (content) => content)
	await signThrough(ipa.versionId, daysBefore(now, 110), daysBefore(now, 105))

	// 3. Acetylsalicylic acid: in review, with an open redline that suggests new wording.
	const aspirin = must(
		await createSpecification(db, {
			actor: author,
			materialId: lab.materialIds.get('RM-0101')!,
			title: 'Identification of acetylsalicylic acid by ATR-FTIR',
			now: daysBefore(now, 10),
			pattern,
		}),
	)
	await draftWith('RM-0101', 'Acetylsalicylic acid', aspirin.versionId, daysBefore(now, 9), (content) => content)
	must(
		await takeWorkflowStep(db, {
			actor: author,
			versionId: aspirin.versionId,
			event: { type: 'submit' },
			now: daysBefore(now, 8),
		}),
	)
	must(
		await addRedline(db, {
			actor: reviewer,
			versionId: aspirin.versionId,
			anchor: 'method.samplePreparation',
			body: 'Acetylsalicylic acid hydrolyses in moist air: say that the sample is measured within 10 minutes of opening the container.',
			suggestedText:
				'Open the container in the sampling booth and measure within 10 minutes. Place a small amount of the sample on the diamond crystal, apply the pressure clamp until the strongest band reads about 0.5–1.0 absorbance, record against an air background taken within the previous 30 minutes.',
			now: daysBefore(now, 7),
		}),
	)

	// The controlled dossiers of the signed versions, stored as the lab would have issued them.
	for (const versionId of [paracetamol.versionId, second.versionId, ipa.versionId]) {
		for (const format of ['pdf', 'docx'] as const) {
			const file = await getDossier(db, { actor: null, versionId, format, now, purpose: 'seed' })
			if (!file) throw new Error(`demo dossier of ${versionId} was not rendered`)
		}
	}

	// The demo inspector holds a current grant over two specifications; an earlier one has ended.
	const inspectorId = (
		await db.select({ id: users.id }).from(users).where(eq(users.email, 'inspector@bandproof.test'))
	)[0]!.id
	const admin = (
		await db.select({ id: users.id, name: users.name }).from(users).where(eq(users.email, 'admin@bandproof.test'))
	)[0]!
	const adminActor: Actor = { id: admin.id, name: admin.name, email: 'admin@bandproof.test', roles: ['admin'] }
	const isoDay = (date: Date) => date.toISOString().slice(0, 10)
	must(
		await createGrant(db, {
			actor: adminActor,
			values: {
				inspectorId,
				purpose: 'Customer audit by Halden Pharma, spring 2026',
				scope: 'all',
				specificationIds: [],
				startsAt: isoDay(daysBefore(now, 200)),
				endsAt: isoDay(daysBefore(now, 195)),
			},
			now: daysBefore(now, 201),
		}),
	)
	must(
		await createGrant(db, {
			actor: adminActor,
			values: {
				inspectorId,
				purpose: 'Regulatory GMP inspection, December 2026',
				scope: 'chosen',
				specificationIds: [paracetamol.specificationId, ipa.specificationId],
				startsAt: isoDay(daysBefore(now, 1)),
				endsAt: isoDay(new Date(now.getTime() + 30 * 86_400_000)),
			},
			now: daysBefore(now, 2),
		}),
	)

	// 4. Ethyl acetate: a draft in progress.
	const ethylAcetate = must(
		await createSpecification(db, {
			actor: author,
			materialId: lab.materialIds.get('RM-0107')!,
			title: 'Identification of ethyl acetate by ATR-FTIR',
			now: daysBefore(now, 3),
			pattern,
		}),
	)
	await draftWith('RM-0107', 'Ethyl acetate', ethylAcetate.versionId, daysBefore(now, 2), (content) => ({
		...content,
		method: {
			...content.method,
			samplePreparation: 'One drop of the liquid on the diamond crystal; cover with the volatile-liquid cap.',
		},
	}))
	return { paracetamol: paracetamol.specificationId, isopropylAlcohol: ipa.specificationId }
}
