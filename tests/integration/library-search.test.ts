import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { actorContext } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listSpecifications, SpecificationListQuerySchema } from '#app/.server/queries/specifications.ts'
import { listSpectra, SpectrumListQuerySchema } from '#app/.server/queries/spectra.ts'
import { createMaterial } from '#app/.server/services/materials.ts'
import { createSpecification } from '#app/.server/services/specifications.ts'
import { loader as specificationsLoader } from '#app/routes/specifications/index.tsx'
import { loader as spectraLoader } from '#app/routes/spectra/index.tsx'
import type { Actor } from '#shared/authz/permissions.ts'
import { makeActor, storeSharedSpectrum } from '#tests/support/factories.ts'

async function material(actor: Actor, code: string, name: string, casNumber?: string): Promise<string> {
	const outcome = await createMaterial(db, { actor, values: { code, name, casNumber }, now: new Date() })
	if (!outcome.ok) throw outcome.error
	return outcome.value.id
}

async function specification(actor: Actor, materialId: string, title: string): Promise<string> {
	const outcome = await createSpecification(db, { actor, materialId, title, now: new Date() })
	if (!outcome.ok) throw outcome.error
	return outcome.value.documentNumber
}

const specTitles = async (q: string) =>
	(await listSpecifications(db, SpecificationListQuerySchema.parse({ q }))).rows.map((row) => row.title).sort()
const spectrumFiles = async (q: string) =>
	(await listSpectra(db, SpectrumListQuerySchema.parse({ q }))).rows.map((row) => row.fileName).sort()

test('[LIB-003] specifications match by number, title, material code, name or CAS RN, ignoring case; % and _ are literal', async () => {
	const author = await makeActor(db, 'author')
	// CAS RNs from memory (acetylsalicylic acid 50-78-2, caffeine 58-08-2); the registration checks their check digits.
	const aspirin = await material(author, 'RM-S01', 'Acetylsalicylic acid', '50-78-2')
	const caffeine = await material(author, 'RM-S02', 'Caffeine', '58-08-2')
	const first = await specification(author, aspirin, 'Identity by FTIR, 100% assay grade')
	await specification(author, caffeine, 'Identity by FTIR, 1000 assay lots')
	await specification(author, caffeine, 'Identity by FTIR, grade_B')
	await specification(author, caffeine, 'Identity by FTIR, gradeXB')
	expect(await specTitles('ACETYLSALICYLIC')).toEqual(['Identity by FTIR, 100% assay grade'])
	expect(await specTitles('50-78')).toEqual(['Identity by FTIR, 100% assay grade'])
	expect(await specTitles('rm-s02')).toHaveLength(3)
	expect(await specTitles(first.toLowerCase())).toEqual(['Identity by FTIR, 100% assay grade'])
	// Unescaped, "0% a" would also match "1000 assay" and "e_B" would also match "eXB".
	expect(await specTitles('0% a')).toEqual(['Identity by FTIR, 100% assay grade'])
	expect(await specTitles('e_B')).toEqual(['Identity by FTIR, grade_B'])
	expect(await specTitles('%')).toEqual(['Identity by FTIR, 100% assay grade'])
	expect(await specTitles('no such thing')).toEqual([])
})

test('[LIB-004] spectra match by file, lot, material or CAS RN; % _ and \\ are literal', async () => {
	const author = await makeActor(db, 'author')
	const aspirin = await material(author, 'RM-S11', 'Acetylsalicylic acid', '50-78-2')
	const files = [
		['compounds/2_chloroaniline_pe1000.jdx', 'LOT_7'],
		['compounds/3_chloroaniline_pe1000.jdx', 'LOTX7'],
		['compounds/aniline_scan.jdx', 'A\\B-50%'],
		['compounds/acetanilide_scan.jdx', 'AXB-500'],
	] as const
	for (const [file, lot] of files) {
		await storeSharedSpectrum(db, author, file, {
			referenceStandardLot: lot,
			materialId: lot === 'LOT_7' ? aspirin : null,
		})
	}
	// Unescaped, "t_7" would also match LOTX7, "\\" would match nothing and "0%" would also match AXB-500.
	expect(await spectrumFiles('t_7')).toEqual(['2_chloroaniline_pe1000.jdx'])
	expect(await spectrumFiles('\\')).toEqual(['aniline_scan.jdx'])
	expect(await spectrumFiles('0%')).toEqual(['aniline_scan.jdx'])
	expect(await spectrumFiles('50-78-2')).toEqual(['2_chloroaniline_pe1000.jdx'])
	expect(await spectrumFiles('acetylSALICYLIC')).toEqual(['2_chloroaniline_pe1000.jdx'])
	expect(await spectrumFiles('3_CHLORO')).toEqual(['3_chloroaniline_pe1000.jdx'])
	expect(await spectrumFiles('chloroaniline')).toEqual(['2_chloroaniline_pe1000.jdx', '3_chloroaniline_pe1000.jdx'])
})

test('[LIB-005] the list loaders read ?q= through zod: trimmed, and a no-match answers an empty page', async () => {
	const author = await makeActor(db, 'author')
	const caffeine = await material(author, 'RM-S21', 'Caffeine', '58-08-2')
	await specification(author, caffeine, 'Identity of caffeine by FTIR')
	await storeSharedSpectrum(db, author, 'compounds/aniline_scan.jdx', { materialId: caffeine })
	const context = new RouterContextProvider()
	context.set(actorContext, author)
	const call = async <T>(loader: (args: never) => Promise<T>, url: string) =>
		loader({ request: new Request(url), context, params: {} } as never)
	const specs = await call(specificationsLoader, 'http://localhost/specifications?q=%20%2058-08%20&page=1')
	expect(specs.query.q).toBe('58-08')
	expect(specs.rows.map((row) => row.title)).toEqual(['Identity of caffeine by FTIR'])
	const none = await call(specificationsLoader, 'http://localhost/specifications?q=theophylline')
	expect(none).toMatchObject({ total: 0, rows: [] })
	const spectra = await call(spectraLoader, 'http://localhost/spectra?q=CAFFEINE')
	expect(spectra.rows.map((row) => row.fileName)).toEqual(['aniline_scan.jdx'])
	const noSpectra = await call(spectraLoader, 'http://localhost/spectra?q=%25%25')
	expect(noSpectra).toMatchObject({ total: 0, rows: [] })
})
