import { createHash } from 'node:crypto'
import { eq, sql } from 'drizzle-orm'
import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { actorContext } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { spectra } from '#app/.server/db/schema/spectra.ts'
import { bytesToFloats, MAX_SPECTRUM_FILE_BYTES, storeSpectrumFile } from '#app/.server/services/spectra.ts'
import { action as uploadBatchAction } from '#app/routes/spectra/upload.tsx'
import { action as uploadFileAction } from '#app/routes/spectra/upload-file.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { importSpectrum } from '#shared/spectra/import.ts'
import { SpectrumMetadataSchema } from '#shared/spectra/spectrum-metadata-schema.ts'
import { auditActionsFor, makeActor, makeMaterial } from '#tests/support/factories.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'

const GOOD = 'compounds/4_chloroaniline_solid_pe1000.jdx'
const SAME_MEASUREMENT_OTHER_FILE = 'compounds/4_chloroaniline_solid_pe1000_single.jdx'
const BROKEN = 'format/malformed/ycheck_mismatch.jdx'
const CSV = 'compounds/toluene_atr_znse_nrcan.csv'

const noMetadata = () => SpectrumMetadataSchema.parse({})
const fileNameOf = (relPath: string) => relPath.split('/').at(-1)!

function contextFor(actor: Actor) {
	const context = new RouterContextProvider()
	context.set(actorContext, actor)
	return context
}

function fileOf(relPath: string): File {
	return new File([readReferenceFile(relPath).slice()], fileNameOf(relPath), { type: 'application/octet-stream' })
}

/** The arguments React Router passes an action, for a signed-in actor (the layout middleware's job in the app). */
function actionArgs(request: Request, actor: Actor) {
	const url = new URL(request.url)
	return { request, context: contextFor(actor), params: {}, url, pattern: url.pathname }
}

function multipart(url: string, fields: Record<string, string>, files: Array<[string, File]>): Request {
	const body = new FormData()
	for (const [name, value] of Object.entries(fields)) body.append(name, value)
	for (const [name, file] of files) body.append(name, file)
	return new Request(`http://localhost${url}`, { method: 'POST', body })
}

/** What a thrown `data(…)` or Response carries: its status and its JSON payload. */
async function thrownBy(run: () => Promise<unknown>): Promise<{ status: number; payload: unknown }> {
	try {
		await run()
	} catch (thrown) {
		if (thrown instanceof Response) return { status: thrown.status, payload: await thrown.json() }
		const init = (thrown as { init?: { status?: number } | null }).init
		if (init?.status) return { status: init.status, payload: (thrown as { data: unknown }).data }
		throw thrown
	}
	throw new Error('expected the action to throw')
}

/** Messages of an error and its causes (Drizzle wraps the driver's error). */
async function databaseRefusal(run: () => Promise<unknown>): Promise<string> {
	try {
		await run()
	} catch (error) {
		const messages: Array<string> = []
		for (let current: unknown = error; current instanceof Error; current = current.cause) messages.push(current.message)
		return messages.join(' | ')
	}
	return 'no error'
}

const uploadEvents = () => db.select().from(auditEvents).where(eq(auditEvents.action, 'spectrum.uploaded'))

test('[UPL-001] a good JCAMP-DX file is stored byte-identical with its SHA-256, parsed arrays and one audit event', async () => {
	const author = await makeActor(db, 'author')
	const bytes = readReferenceFile(GOOD)
	const outcome = await storeSpectrumFile(db, {
		actor: author,
		fileName: fileNameOf(GOOD),
		bytes,
		metadata: { ...noMetadata(), technique: 'Solid' },
		now: new Date(),
	})
	expect(outcome).toMatchObject({ status: 'stored', fileName: '4_chloroaniline_solid_pe1000.jdx' })
	const id = outcome.status === 'stored' ? outcome.spectrumId : ''
	const [row] = await db.select().from(spectra).where(eq(spectra.id, id))
	expect(row).toBeDefined()
	expect(Buffer.from(row!.originalBytes).equals(Buffer.from(bytes))).toBe(true)
	expect(row!.byteSize).toBe(bytes.byteLength)
	expect(row!.sha256).toBe(createHash('sha256').update(bytes).digest('hex'))
	const imported = importSpectrum(bytes, { fileName: fileNameOf(GOOD) })
	if (!imported.ok) throw imported.error
	expect(bytesToFloats(row!.x)).toEqual(imported.value.spectrum.x)
	expect(bytesToFloats(row!.y)).toEqual(imported.value.spectrum.y)
	// SOURCES.md: 4_chloroaniline_solid_pe1000.jdx has 1801 points over 400–4000 cm⁻¹, in transmittance.
	expect(row).toMatchObject({ points: 1801, technique: 'Solid', purpose: 'reference', uploadedBy: author.id })
	expect(row!.minWavenumber).toBeCloseTo(400, 1)
	expect(row!.maxWavenumber).toBeCloseTo(4000, 1)
	expect(outcome.status === 'stored' && outcome.points).toBe(1801)
	expect(await auditActionsFor(db, id)).toEqual(['spectrum.uploaded'])
	const [event] = await uploadEvents()
	expect(event).toMatchObject({
		actorId: author.id,
		entityType: 'spectrum',
		after: { sha256: row!.sha256, points: 1801, fileName: '4_chloroaniline_solid_pe1000.jdx' },
	})
})

test("[UPL-002] a broken file is refused with the importer's line message; no row and no audit event", async () => {
	const author = await makeActor(db, 'author')
	const outcome = await storeSpectrumFile(db, {
		actor: author,
		fileName: 'ycheck_mismatch.jdx',
		bytes: readReferenceFile(BROKEN),
		metadata: noMetadata(),
		now: new Date(),
	})
	// SOURCES.md: the Y-check value in the 10th data line was changed from D22709119 to D27709119.
	expect(outcome).toMatchObject({ status: 'failed', fileName: 'ycheck_mismatch.jdx' })
	const message = outcome.status === 'failed' ? outcome.message : ''
	expect(message).toMatch(/^line \d+: /)
	expect(message).toContain('427709119')
	expect(message).toContain('422709119')
	expect(await db.select({ id: spectra.id }).from(spectra)).toHaveLength(0)
	expect(await uploadEvents()).toHaveLength(0)
})

test('[UPL-003] the same bytes uploaded again are recognised as a duplicate of the first; one row, one audit event', async () => {
	const author = await makeActor(db, 'author')
	const other = await makeActor(db, 'author')
	const bytes = readReferenceFile(GOOD)
	const first = await storeSpectrumFile(db, {
		actor: author,
		fileName: 'first.jdx',
		bytes,
		metadata: noMetadata(),
		now: new Date(),
	})
	const again = await storeSpectrumFile(db, {
		actor: other,
		fileName: 'renamed.jdx',
		bytes,
		metadata: noMetadata(),
		now: new Date(),
	})
	expect(first.status).toBe('stored')
	expect(again).toMatchObject({
		status: 'duplicate',
		fileName: 'renamed.jdx',
		spectrumId: first.status === 'stored' ? first.spectrumId : 'none',
	})
	expect(again.status === 'duplicate' ? again.message : '').toContain('first.jdx')
	const rows = await db.select({ fileName: spectra.fileName, uploadedBy: spectra.uploadedBy }).from(spectra)
	expect(rows).toEqual([{ fileName: 'first.jdx', uploadedBy: author.id }])
	expect(await uploadEvents()).toHaveLength(1)
})

test('[UPL-003] two simultaneous uploads of the same bytes store one row; the other is told it is a duplicate', async () => {
	const author = await makeActor(db, 'author')
	const bytes = readReferenceFile(GOOD)
	const store = (fileName: string) =>
		storeSpectrumFile(db, { actor: author, fileName, bytes, metadata: noMetadata(), now: new Date() })
	const outcomes = await Promise.all([store('a.jdx'), store('b.jdx')])
	expect(outcomes.map((outcome) => outcome.status).sort()).toEqual(['duplicate', 'stored'])
	const rows = await db.select({ id: spectra.id }).from(spectra)
	expect(rows).toHaveLength(1)
	expect(outcomes.every((outcome) => outcome.status !== 'failed' && outcome.spectrumId === rows[0]!.id)).toBe(true)
	expect(await uploadEvents()).toHaveLength(1)
})

test('[UPL-003] the same measurement in a different file is not a duplicate: the hash is of the bytes', async () => {
	const author = await makeActor(db, 'author')
	// SOURCES.md: the two 4-chloroaniline files are the same measurement, with a different compression and axis order.
	const store = (relPath: string) =>
		storeSpectrumFile(db, {
			actor: author,
			fileName: fileNameOf(relPath),
			bytes: readReferenceFile(relPath),
			metadata: noMetadata(),
			now: new Date(),
		})
	expect((await store(GOOD)).status).toBe('stored')
	expect((await store(SAME_MEASUREMENT_OTHER_FILE)).status).toBe('stored')
	expect(await db.select({ id: spectra.id }).from(spectra)).toHaveLength(2)
})

test('[UPL-004] a file larger than MAX_SPECTRUM_FILE_BYTES is refused with a message; nothing is stored', async () => {
	const author = await makeActor(db, 'author')
	const good = readReferenceFile(GOOD)
	// A real file padded with trailing blank lines past the limit: only its size is wrong.
	const bytes = new Uint8Array(MAX_SPECTRUM_FILE_BYTES + 1).fill(0x0a)
	bytes.set(good)
	const outcome = await storeSpectrumFile(db, {
		actor: author,
		fileName: 'huge.jdx',
		bytes,
		metadata: noMetadata(),
		now: new Date(),
	})
	expect(outcome).toMatchObject({ status: 'failed', fileName: 'huge.jdx' })
	expect(outcome.status === 'failed' ? outcome.message : '').toMatch(/more than the 10(\.0)? MB allowed/)
	expect(await db.select({ id: spectra.id }).from(spectra)).toHaveLength(0)
	expect(await uploadEvents()).toHaveLength(0)
})

test('[UPL-005] a batch through the upload form: good files stored with the metadata, the broken one refused and nothing of it saved', async () => {
	const author = await makeActor(db, 'author')
	const materialId = await makeMaterial(db, author, '4-Chloroaniline')
	const request = multipart(
		'/spectra/upload',
		{
			purpose: 'reference',
			materialId,
			technique: 'KBr disc',
			instrument: 'PE 1000',
			resolution: '2',
			acquiredOn: '2026-03-02',
			referenceStandardName: '4-Chloroaniline CRS',
			referenceStandardLot: 'L-17',
			notes: '',
		},
		[
			['files', fileOf(GOOD)],
			['files', fileOf(BROKEN)],
			['files', fileOf(CSV)],
		],
	)
	const response = await uploadBatchAction(actionArgs(request, author))
	expect(response.init?.status ?? 200).toBe(200)
	const outcomes = response.data.outcomes
	expect(outcomes.map((outcome) => [outcome.fileName, outcome.status])).toEqual([
		['4_chloroaniline_solid_pe1000.jdx', 'stored'],
		['ycheck_mismatch.jdx', 'failed'],
		['toluene_atr_znse_nrcan.csv', 'stored'],
	])
	expect(outcomes[1]!.status === 'failed' ? outcomes[1]!.message : '').toMatch(/^line \d+: the DIF check value/)
	const rows = await db.select().from(spectra).orderBy(spectra.fileName)
	expect(rows.map((row) => row.fileName)).toEqual(['4_chloroaniline_solid_pe1000.jdx', 'toluene_atr_znse_nrcan.csv'])
	for (const row of rows) {
		expect(row).toMatchObject({
			purpose: 'reference',
			materialId,
			technique: 'KBr disc',
			instrument: 'PE 1000',
			resolution: 2,
			acquiredOn: '2026-03-02',
			referenceStandardName: '4-Chloroaniline CRS',
			referenceStandardLot: 'L-17',
			notes: null,
		})
	}
	const brokenHash = createHash('sha256').update(readReferenceFile(BROKEN)).digest('hex')
	expect(await db.select({ id: spectra.id }).from(spectra).where(eq(spectra.sha256, brokenHash))).toHaveLength(0)
	expect((await uploadEvents()).map((event) => (event.after as { fileName: string }).fileName).sort()).toEqual([
		'4_chloroaniline_solid_pe1000.jdx',
		'toluene_atr_znse_nrcan.csv',
	])
})

test('[UPL-005] the upload form refuses a batch without files and invalid metadata with 400, storing nothing', async () => {
	const author = await makeActor(db, 'author')
	const call = (request: Request) => uploadBatchAction(actionArgs(request, author))
	const noFiles = await call(multipart('/spectra/upload', { purpose: 'reference' }, []))
	expect(noFiles.init?.status).toBe(400)
	const badDate = await call(
		multipart('/spectra/upload', { purpose: 'reference', acquiredOn: '30.11.2026' }, [['files', fileOf(GOOD)]]),
	)
	expect(badDate.init?.status).toBe(400)
	expect(badDate.data.result.error).toMatchObject({ acquiredOn: ['Use a date like 2026-11-30'] })
	expect(await db.select({ id: spectra.id }).from(spectra)).toHaveLength(0)
})

test("[UPL-006] the per-file route answers JSON: 201 stored, 200 duplicate, 422 refused with the importer's message", async () => {
	const author = await makeActor(db, 'author')
	const send = async (relPath: string) => {
		const request = multipart('/spectra/upload-file', { purpose: 'sample', technique: '', notes: 'batch 7' }, [
			['file', fileOf(relPath)],
		])
		const response = await uploadFileAction(actionArgs(request, author))
		expect(response.headers.get('content-type')).toContain('application/json')
		return { status: response.status, body: (await response.json()) as Record<string, unknown> }
	}
	const stored = await send(GOOD)
	expect(stored).toMatchObject({
		status: 201,
		body: { status: 'stored', fileName: '4_chloroaniline_solid_pe1000.jdx', points: 1801 },
	})
	const duplicate = await send(GOOD)
	expect(duplicate).toMatchObject({ status: 200, body: { status: 'duplicate', spectrumId: stored.body.spectrumId } })
	const refused = await send(BROKEN)
	expect(refused).toMatchObject({ status: 422, body: { status: 'failed', fileName: 'ycheck_mismatch.jdx' } })
	expect(String(refused.body.message)).toMatch(/^line \d+: the DIF check value/)
	const rows = await db
		.select({ purpose: spectra.purpose, technique: spectra.technique, notes: spectra.notes })
		.from(spectra)
	expect(rows).toEqual([{ purpose: 'sample', technique: null, notes: 'batch 7' }])
})

test('[UPL-004] a request with a file over the size limit answers 413 with a message, from both routes; nothing is stored', async () => {
	const author = await makeActor(db, 'author')
	const huge = () => new File([new Uint8Array(MAX_SPECTRUM_FILE_BYTES + 1).fill(0x20)], 'huge.jdx')
	const single = await thrownBy(() =>
		uploadFileAction(
			actionArgs(multipart('/spectra/upload-file', { purpose: 'reference' }, [['file', huge()]]), author),
		),
	)
	expect(single.status).toBe(413)
	expect(single.payload).toMatchObject({ message: expect.stringContaining('larger than 10 MB') })
	const batch = await thrownBy(() =>
		uploadBatchAction(
			actionArgs(
				multipart('/spectra/upload', { purpose: 'reference' }, [
					['files', fileOf(GOOD)],
					['files', huge()],
				]),
				author,
			),
		),
	)
	expect(batch.status).toBe(413)
	expect(batch.payload).toMatchObject({ message: expect.stringContaining('Nothing was stored') })
	expect(await db.select({ id: spectra.id }).from(spectra)).toHaveLength(0)
})

test('[UPL-007] a reviewer (read-only for the library) gets 403 from both upload actions and nothing is stored', async () => {
	const reviewer = await makeActor(db, 'reviewer')
	const single = await thrownBy(() =>
		uploadFileAction(
			actionArgs(multipart('/spectra/upload-file', { purpose: 'reference' }, [['file', fileOf(GOOD)]]), reviewer),
		),
	)
	expect(single).toMatchObject({ status: 403, payload: { message: expect.stringContaining('spectrum:upload') } })
	const batch = await thrownBy(() =>
		uploadBatchAction(
			actionArgs(multipart('/spectra/upload', { purpose: 'reference' }, [['files', fileOf(GOOD)]]), reviewer),
		),
	)
	expect(batch).toMatchObject({ status: 403 })
	expect(await db.select({ id: spectra.id }).from(spectra)).toHaveLength(0)
	expect(await uploadEvents()).toHaveLength(0)
})

test('[UPL-008] a locked spectrum cannot be updated or deleted, even by direct SQL (database trigger)', async () => {
	const author = await makeActor(db, 'author')
	const outcome = await storeSpectrumFile(db, {
		actor: author,
		fileName: 'ref.jdx',
		bytes: readReferenceFile(GOOD),
		metadata: noMetadata(),
		now: new Date(),
	})
	const id = outcome.status === 'stored' ? outcome.spectrumId : ''
	// Before the lock the row may still change (e.g. its notes).
	await db.execute(sql`update spectra set notes = 'checked' where id = ${id}`)
	await db.execute(sql`update spectra set locked_at = now() where id = ${id}`)
	const update = await databaseRefusal(() =>
		db.execute(sql`update spectra set file_name = 'renamed.jdx' where id = ${id}`),
	)
	expect(update).toContain(`spectrum ${id} is locked: an approved specification version references it (UPDATE refused)`)
	const unlock = await databaseRefusal(() => db.execute(sql`update spectra set locked_at = null where id = ${id}`))
	expect(unlock).toContain('(UPDATE refused)')
	const remove = await databaseRefusal(() => db.execute(sql`delete from spectra where id = ${id}`))
	expect(remove).toContain(`spectrum ${id} is locked: an approved specification version references it (DELETE refused)`)
	const [row] = await db
		.select({ fileName: spectra.fileName, notes: spectra.notes, lockedAt: spectra.lockedAt })
		.from(spectra)
		.where(eq(spectra.id, id))
	expect(row).toMatchObject({ fileName: 'ref.jdx', notes: 'checked' })
	expect(row!.lockedAt).not.toBeNull()
})
