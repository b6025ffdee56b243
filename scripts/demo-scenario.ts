import { count } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { SYSTEM_ACTOR } from '#app/.server/services/audit.ts'
import { createMaterial } from '#app/.server/services/materials.ts'
import { createUser } from '#app/.server/services/users.ts'
import type { Actor, Role } from '#shared/authz/permissions.ts'

/**
 * The demo scenario: the incoming-materials QC laboratory of Calder Vale Pharmaceuticals, a fictional
 * maker of oral solid doses. Invented people; real substances with their real CAS Registry Numbers.
 */
export const DEMO_PASSWORD = 'calder-vale-demo'

export const DEMO_PEOPLE: Array<{ email: string; name: string; roles: Array<Role>; timeZone: string }> = [
	{ email: 'author@bandproof.test', name: 'Maren Oduya', roles: ['author'], timeZone: 'Europe/London' },
	{ email: 'reviewer@bandproof.test', name: 'Tomasz Wielgosz', roles: ['reviewer'], timeZone: 'Europe/Warsaw' },
	{ email: 'approver@bandproof.test', name: 'Ilse Brandvold', roles: ['approver'], timeZone: 'Europe/Oslo' },
	{ email: 'inspector@bandproof.test', name: 'Rafael Quintero', roles: ['inspector'], timeZone: 'America/New_York' },
	{ email: 'admin@bandproof.test', name: 'Priya Ramanathan', roles: ['admin'], timeZone: 'Europe/London' },
]

const DEMO_MATERIALS = [
	{ code: 'RM-0101', name: 'Acetylsalicylic acid', synonyms: 'Aspirin', casNumber: '50-78-2', formula: 'C9H8O4', grade: 'Ph. Eur.' },
	{ code: 'RM-0102', name: 'Paracetamol', synonyms: 'Acetaminophen; 4-Hydroxyacetanilide', casNumber: '103-90-2', formula: 'C8H9NO2', grade: 'Ph. Eur.' },
	{ code: 'RM-0103', name: 'Caffeine, anhydrous', synonyms: '', casNumber: '58-08-2', formula: 'C8H10N4O2', grade: 'USP' },
	{ code: 'RM-0104', name: 'Lactose monohydrate', synonyms: '', casNumber: '64044-51-5', formula: 'C12H22O11·H2O', grade: 'Ph. Eur.' },
	{ code: 'RM-0105', name: 'Microcrystalline cellulose', synonyms: 'MCC', casNumber: '9004-34-6', formula: '(C6H10O5)n', grade: 'Ph. Eur.' },
	{ code: 'RM-0106', name: 'Magnesium stearate', synonyms: '', casNumber: '557-04-0', formula: 'Mg(C18H35O2)2', grade: 'Ph. Eur.' },
	{ code: 'RM-0107', name: 'Ethyl acetate', synonyms: 'Ethyl ethanoate', casNumber: '141-78-6', formula: 'C4H8O2', grade: 'Ph. Eur.' },
	{ code: 'RM-0108', name: 'Isopropyl alcohol', synonyms: '2-Propanol; Isopropanol', casNumber: '67-63-0', formula: 'C3H8O', grade: 'Ph. Eur.' },
	{ code: 'RM-0109', name: 'Benzaldehyde', synonyms: '', casNumber: '100-52-7', formula: 'C7H6O', grade: 'Technical' },
	{ code: 'RM-0110', name: 'Acetanilide', synonyms: 'N-Phenylacetamide', casNumber: '103-84-4', formula: 'C8H9NO', grade: 'Technical' },
]

/** Seeds the demo scenario into an empty database; does nothing when any account exists. */
export async function seedDemoScenario(db: Db, now = new Date()): Promise<{ seeded: boolean }> {
	const [existing] = await db.select({ n: count() }).from(users)
	if ((existing?.n ?? 0) > 0) return { seeded: false }
	const ids = new Map<string, string>()
	for (const person of DEMO_PEOPLE) {
		const outcome = await createUser(db, { actor: SYSTEM_ACTOR, values: { ...person, password: DEMO_PASSWORD }, now })
		if (!outcome.ok) throw outcome.error
		ids.set(person.email, outcome.value.id)
	}
	const author = DEMO_PEOPLE[0]!
	const authorActor: Actor = { id: ids.get(author.email)!, name: author.name, email: author.email, roles: author.roles }
	for (const material of DEMO_MATERIALS) {
		const outcome = await createMaterial(db, { actor: authorActor, values: material, now })
		if (!outcome.ok) throw outcome.error
	}
	return { seeded: true }
}
