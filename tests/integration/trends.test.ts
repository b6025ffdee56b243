/**
 * The trends page's loader over real identity runs of real spectra (../shared/reference-spectra, SOURCES.md):
 * - reference: 4-chloroaniline, solid, PE 1000; conforming containers are seeded-noise replicates of it
 *   (tests/support/container-samples.ts);
 * - a non-conforming container: 3-chloroaniline, a positional isomer that must not match (SOURCES.md "must not match");
 * - instrument checks: replicates of the PE 1600 polystyrene film, which passes Ph. Eur. 2.2.24 FT ±1.0 cm⁻¹
 *   (FACTS.md §1.1, READ-2°).
 * What the loader returns is checked against the database rows and the specification's stored criteria, not against
 * the loader's own helpers.
 */
import { eq } from 'drizzle-orm'
import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { actorContext } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { runContainers } from '#app/.server/db/schema/runs.ts'
import { specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { recordIdentityRun } from '#app/.server/services/identity-runs.ts'
import { recordInstrumentCheck, registerInstrument } from '#app/.server/services/instruments.ts'
import { parseContent, saveDraft } from '#app/.server/services/specifications.ts'
import { loader } from '#app/routes/trends.tsx'
import type { Actor } from '#shared/authz/permissions.ts'
import { containerFiles, replicateOf } from '#tests/support/container-samples.ts'
import { makeActor, makeMaterial, makeSignedVersion, makeSubmittableDraft, takeStep } from '#tests/support/factories.ts'

const DAY = 86_400_000
const REFERENCE = 'compounds/4_chloroaniline_solid_pe1000.jdx'
const ISOMER = 'compounds/3_chloroaniline_pe1000.jdx'
const GOOD_FILM = 'polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx'

let seed = 70_000

function loaderArgs(actor: Actor, search = '') {
	const context = new RouterContextProvider()
	context.set(actorContext, actor)
	const request = new Request(`http://localhost/trends${search}`)
	const url = new URL(request.url)
	return { request, context, params: {}, url, pattern: '/trends' }
}

/** What a thrown `data(…)` carries: its status. */
async function statusThrownBy(run: () => Promise<unknown>): Promise<number> {
	try {
		await run()
	} catch (thrown) {
		if (thrown instanceof Response) return thrown.status
		const init = (thrown as { init?: { status?: number } | null }).init
		if (init?.status) return init.status
		throw thrown
	}
	throw new Error('expected the loader to throw')
}

async function instrument(admin: Actor, analyst: Actor, code: string, checkedAt: Date) {
	const registered = await registerInstrument(db, {
		actor: admin,
		values: {
			code,
			name: 'Bench FTIR',
			serialNumber: null,
			location: null,
			checkValidityDays: 30,
			checkTable: 'ph-eur-ft',
		},
		now: checkedAt,
	})
	if (!registered.ok) throw registered.error
	const checked = await recordInstrumentCheck(db, {
		actor: analyst,
		instrumentId: registered.value.id,
		fileName: `ps-film-${++seed}.jdx`,
		bytes: replicateOf(GOOD_FILM, seed, 0.001),
		notes: null,
		now: checkedAt,
	})
	if (!checked.ok) throw checked.error
	expect(checked.value.passed).toBe(true)
	return registered.value.id
}

async function run(input: {
	analyst: Actor
	specificationId: string
	instrumentId: string
	lotNumber: string
	supplier: string
	sources: Array<{ relPath: string; seed?: number }>
	at: Date
}) {
	const recorded = await recordIdentityRun(db, {
		kind: 'first',
		actor: input.analyst,
		specificationId: input.specificationId,
		lot: {
			lotNumber: input.lotNumber,
			supplier: input.supplier,
			containerCount: input.sources.length,
			receivedOn: null,
		},
		instrumentId: input.instrumentId,
		files: containerFiles(input.lotNumber, input.sources),
		now: input.at,
	})
	if (!recorded.ok) throw recorded.error
	return recorded.value
}

const suffix = () => Math.random().toString(36).slice(2, 7)

test('[TRD-001] the trend of a material lists every container of its runs with the threshold its version set, summarised per supplier and instrument', async () => {
	const people = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const analyst = await makeActor(db, 'analyst')
	const admin = await makeActor(db, 'admin')
	const version = await makeSignedVersion(db, people)
	const [stored] = await db.select().from(specVersions).where(eq(specVersions.id, version.versionId))
	const minCorrelation = parseContent(stored!.content).criteria.minCorrelation
	const start = Date.now() - 20 * DAY
	const irA = await instrument(admin, analyst, `IR-A${suffix()}`, new Date(start))
	const irB = await instrument(admin, analyst, `IR-B${suffix()}`, new Date(start))
	const first = await run({
		analyst,
		specificationId: version.specificationId,
		instrumentId: irA,
		lotNumber: `LA-${suffix()}`,
		supplier: 'Northbridge Fine Chemicals',
		sources: [
			{ relPath: REFERENCE, seed: 101 },
			{ relPath: REFERENCE, seed: 102 },
			{ relPath: REFERENCE, seed: 103 },
		],
		at: new Date(start + 2 * DAY),
	})
	const second = await run({
		analyst,
		specificationId: version.specificationId,
		instrumentId: irB,
		lotNumber: `LB-${suffix()}`,
		supplier: 'Alder Chemie',
		sources: [{ relPath: REFERENCE, seed: 104 }, { relPath: ISOMER }],
		at: new Date(start + 9 * DAY),
	})
	expect([first.outcome, second.outcome]).toEqual(['conforms', 'flagged'])

	const [specification] = await db
		.select({ materialId: specifications.materialId })
		.from(specifications)
		.where(eq(specifications.id, version.specificationId))
	const materialId = specification!.materialId
	const result = await loader(loaderArgs(analyst, `?material=${materialId}`))
	expect(result.material?.id).toBe(materialId)
	expect(result.materials.map((material) => material.id)).toContain(materialId)

	// Every container row of both runs, oldest run first, then by container, with the stored correlation.
	const stored1 = await db.select().from(runContainers).where(eq(runContainers.runId, first.runId))
	const stored2 = await db.select().from(runContainers).where(eq(runContainers.runId, second.runId))
	const expected = [...stored1, ...stored2]
		.map((row) => ({
			runNumber: row.runId === first.runId ? first.runNumber : second.runNumber,
			containerNumber: row.containerNumber,
			verdict: row.verdict,
			correlation: row.correlation,
		}))
		.sort((a, b) => a.runNumber.localeCompare(b.runNumber) || a.containerNumber - b.containerNumber)
	expect(
		result.points.map(({ runNumber, containerNumber, verdict, correlation }) => ({
			runNumber,
			containerNumber,
			verdict,
			correlation,
		})),
	).toEqual(expected)
	expect(result.points.every((point) => point.threshold === minCorrelation)).toBe(true)
	expect(result.points.map((point) => point.recordedAt.slice(0, 10))).toEqual([
		...Array(3).fill(new Date(start + 2 * DAY).toISOString().slice(0, 10)),
		...Array(2).fill(new Date(start + 9 * DAY).toISOString().slice(0, 10)),
	])
	// The isomer's container is below the minimum (SOURCES.md: must not match).
	const isomer = result.points.find((point) => point.runNumber === second.runNumber && point.containerNumber === 2)!
	expect(isomer.verdict).toBe('does-not-conform')
	expect(isomer.correlation!).toBeLessThan(minCorrelation)

	expect(result.thresholds).toEqual([
		{
			documentNumber: version.documentNumber,
			steps: [{ from: result.points[0]!.recordedAt, threshold: minCorrelation, versionNumber: 1 }],
		},
	])
	expect(result.bySupplier.map((group) => [group.key, group.runs, group.containers, group.belowThreshold])).toEqual([
		['Alder Chemie', 1, 2, 1],
		['Northbridge Fine Chemicals', 1, 3, 0],
	])
	const northbridge = stored1.map((row) => row.correlation!)
	expect(result.bySupplier[1]!.lowest).toBe(Math.min(...northbridge))
	expect(result.bySupplier[1]!.mean).toBeCloseTo(northbridge.reduce((a, b) => a + b, 0) / 3, 12)
	expect(result.byInstrument.map((group) => group.containers)).toEqual([3, 2])
	expect(result.description).toMatch(
		/^5 containers in 2 runs from \d{4}-\d{2}-\d{2} to \d{4}-\d{2}-\d{2}\. 1 container below/,
	)
	expect(result.description).toContain(`run ${second.runNumber}`)
})

test('[TRD-002] a material with two specifications: each run keeps the threshold of its own version', async () => {
	const people = {
		author: await makeActor(db, 'author'),
		reviewer: await makeActor(db, 'reviewer'),
		approver: await makeActor(db, 'approver'),
	}
	const analyst = await makeActor(db, 'analyst')
	const admin = await makeActor(db, 'admin')
	const materialId = await makeMaterial(db, people.author, '4-Chloroaniline')
	// Two specifications of one material, both at version 1, with different minimum correlations.
	const specs = []
	for (const minCorrelation of [0.95, 0.9]) {
		const draft = await makeSubmittableDraft(db, people.author, { materialId })
		const [row] = await db.select().from(specVersions).where(eq(specVersions.id, draft.versionId))
		const content = parseContent(row!.content)
		const saved = await saveDraft(db, {
			actor: people.author,
			versionId: draft.versionId,
			revision: row!.revision,
			content: { ...content, criteria: { ...content.criteria, minCorrelation } },
			changeReason: null,
			now: new Date(),
		})
		if (!saved.ok) throw saved.error
		await takeStep(db, people.author, draft.versionId, { type: 'submit' })
		await takeStep(db, people.reviewer, draft.versionId, { type: 'sign', meaning: 'reviewed', reauthenticated: true })
		const state = await takeStep(db, people.approver, draft.versionId, {
			type: 'sign',
			meaning: 'approved',
			reauthenticated: true,
			effectiveFrom: new Date(),
		})
		expect(state).toBe('effective')
		specs.push({ ...draft, minCorrelation })
	}
	const start = Date.now() - 10 * DAY
	const ir = await instrument(admin, analyst, `IR-C${suffix()}`, new Date(start))
	for (const [index, spec] of specs.entries()) {
		await run({
			analyst,
			specificationId: spec.specificationId,
			instrumentId: ir,
			lotNumber: `LC-${suffix()}`,
			supplier: 'Northbridge Fine Chemicals',
			sources: [{ relPath: REFERENCE, seed: 200 + index }],
			at: new Date(start + (index + 1) * DAY),
		})
	}
	const result = await loader(loaderArgs(analyst, `?material=${materialId}`))
	expect(result.points.map((point) => [point.documentNumber, point.versionNumber, point.threshold])).toEqual(
		specs.map((spec) => [spec.documentNumber, 1, spec.minCorrelation]),
	)
	expect(result.thresholds.map((line) => line.steps.map((step) => step.threshold))).toHaveLength(2)
	// One step line per specification, each at the minimum its own version set (ordered by document number).
	expect(result.thresholds.map((line) => [line.documentNumber, line.steps.map((step) => step.threshold)])).toEqual(
		specs
			.map((spec) => [spec.documentNumber, [spec.minCorrelation]])
			.sort((a, b) => (a[0]! < b[0]! ? -1 : a[0]! > b[0]! ? 1 : 0)),
	)
})

test('[TRD-003] trends are for lab staff: an inspector is refused; a malformed id is 400, a material without lots 404', async () => {
	const inspector = await makeActor(db, 'inspector')
	const reviewer = await makeActor(db, 'reviewer')
	expect(await statusThrownBy(() => loader(loaderArgs(inspector)))).toBe(403)
	expect(await statusThrownBy(() => loader(loaderArgs(reviewer, '?material=not-an-id')))).toBe(400)
	const withoutLots = await makeMaterial(db, await makeActor(db, 'author'), 'Untested material')
	expect(await statusThrownBy(() => loader(loaderArgs(reviewer, `?material=${withoutLots}`)))).toBe(404)
	// Without a choice the first material with lots (by code) is shown, and it is one of the picker's options.
	const result = await loader(loaderArgs(reviewer))
	expect(result.materials.map((material) => material.id)).not.toContain(withoutLots)
	if (result.materials.length > 0) expect(result.material?.id).toBe(result.materials[0]!.id)
	else expect(result.material).toBeNull()
})
