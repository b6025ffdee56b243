/**
 * The identity-run pages' loaders and actions with real multipart uploads, real passwords and the real database.
 * Sample files: real spectra of the shared set and seeded replicates of them (tests/support/container-samples.ts).
 */
import { count, eq } from 'drizzle-orm'
import { RouterContextProvider } from 'react-router'
import { expect, test } from 'vitest'
import { actorContext } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { lots, runSignatures } from '#app/.server/db/schema/runs.ts'
import { action as recordLotAction, loader as newLotLoader } from '#app/routes/lots/new.tsx'
import { action as runAction, loader as runLoader } from '#app/routes/runs/$runId.tsx'
import { action as checkAction } from '#app/routes/instruments/$instrumentId.tsx'
import type { Actor } from '#shared/authz/permissions.ts'
import { containerFiles } from '#tests/support/container-samples.ts'
import { makeActor, TEST_PASSWORD } from '#tests/support/factories.ts'
import { makeReleaseLab } from '#tests/support/release-lab.ts'

const REFERENCE = 'compounds/4_chloroaniline_solid_pe1000.jdx'

function args(request: Request, actor: Actor, params: Record<string, string> = {}) {
	const context = new RouterContextProvider()
	context.set(actorContext, actor)
	const url = new URL(request.url)
	return { request, context, params, url, pattern: url.pathname } as never
}

function post(
	path: string,
	fields: Record<string, string>,
	files: Array<{ fileName: string; bytes: Uint8Array }> = [],
) {
	const body = new FormData()
	for (const [name, value] of Object.entries(fields)) body.append(name, value)
	for (const file of files) body.append('files', new File([file.bytes.slice()], file.fileName))
	return new Request(`http://localhost${path}`, { method: 'POST', body })
}

async function statusOf(run: () => Promise<unknown>): Promise<number> {
	try {
		const outcome = await run()
		if (outcome instanceof Response) return outcome.status
		return (outcome as { init?: { status?: number } }).init?.status ?? 200
	} catch (thrown) {
		if (thrown instanceof Response) return thrown.status
		return (thrown as { init?: { status?: number } }).init?.status ?? 500
	}
}

async function lotCount() {
	const [row] = await db.select({ n: count() }).from(lots)
	return row!.n
}

test('[RUN-101] an analyst records a lot through the form; a missing container is refused with the reason, the typing kept and nothing stored', async () => {
	const lab = await makeReleaseLab()
	const lotNumber = `F${Date.now() % 100000}`
	const fields = {
		specificationId: lab.version.specificationId,
		lotNumber,
		supplier: 'Harrow & Lune Chemicals',
		containerCount: '3',
		instrumentId: lab.instrumentId,
	}
	const before = await lotCount()
	const files = containerFiles(lotNumber, [
		{ relPath: REFERENCE, seed: 101 },
		{ relPath: REFERENCE, seed: 102 },
	])
	const refused = (await recordLotAction(args(post('/lots/new', fields, files), lab.analyst))) as unknown as {
		data: { result: { error: Record<string, Array<string>>; initialValue: Record<string, string> } }
		init: { status: number }
	}
	expect(refused.init.status).toBe(422)
	expect(refused.data.result.error['']).toContain('Container 3 has no spectrum.')
	expect(refused.data.result.initialValue).toMatchObject({ lotNumber, supplier: 'Harrow & Lune Chemicals' })
	expect(await lotCount()).toBe(before)

	// The analyst corrects a badly named file by choosing its container (container-<fileIndex>).
	const third = {
		fileName: 'extra-sample.jdx',
		bytes: containerFiles(lotNumber, [{ relPath: REFERENCE, seed: 103 }])[0]!.bytes,
	}
	const recorded = await recordLotAction(
		args(post('/lots/new', { ...fields, 'container-2': '3' }, [...files, third]), lab.analyst),
	)
	expect(recorded).toBeInstanceOf(Response)
	const location = (recorded as Response).headers.get('Location')!
	expect(location).toMatch(/^\/runs\/[0-9a-f-]{36}$/)
	expect(await lotCount()).toBe(before + 1)

	const runId = location.split('/').at(-1)!
	const page = (await runLoader(
		args(new Request(`http://localhost${location}`), lab.analyst, { runId }),
	)) as unknown as {
		containers: Array<{ verdict: string }>
		may: { sign: boolean; verify: boolean }
	}
	expect(page.containers.map((row) => row.verdict)).toEqual(['conforms', 'conforms', 'conforms'])
	expect(page.may).toMatchObject({ sign: true, verify: false })
})

test('[RUN-102] signing needs the right password; a wrong one signs nothing; the performer cannot verify; authors cannot record runs or checks', async () => {
	const lab = await makeReleaseLab()
	const lotNumber = `G${Date.now() % 100000}`
	const recorded = (await recordLotAction(
		args(
			post(
				'/lots/new',
				{
					specificationId: lab.version.specificationId,
					lotNumber,
					supplier: 'Harrow & Lune Chemicals',
					containerCount: '1',
					instrumentId: lab.instrumentId,
				},
				containerFiles(lotNumber, [{ relPath: REFERENCE, seed: 201 }]),
			),
			lab.analyst,
		),
	)) as Response
	const runId = recorded.headers.get('Location')!.split('/').at(-1)!
	const sign = (actor: Actor, password: string, intent = 'sign-performed') =>
		statusOf(() =>
			runAction(
				args(
					new Request(`http://localhost/runs/${runId}`, {
						method: 'POST',
						body: new URLSearchParams({ intent, password }),
					}),
					actor,
					{ runId },
				),
			),
		)
	expect(await sign(lab.analyst, 'not-my-password')).toBe(401)
	expect(await db.select().from(runSignatures).where(eq(runSignatures.runId, runId))).toHaveLength(0)
	expect(await sign(lab.analyst, TEST_PASSWORD)).toBe(302)
	expect(await sign(lab.analyst, TEST_PASSWORD, 'verify')).toBe(403)
	expect(await sign(lab.secondAnalyst, TEST_PASSWORD, 'verify')).toBe(302)
	expect(
		(await db.select().from(runSignatures).where(eq(runSignatures.runId, runId))).map((row) => row.meaning).sort(),
	).toEqual(['performed', 'verified'])

	const author = await makeActor(db, 'author')
	expect(await statusOf(() => newLotLoader(args(new Request('http://localhost/lots/new'), author)))).toBe(403)
	expect(
		await statusOf(() =>
			checkAction(args(post(`/instruments/${lab.instrumentId}`, {}), author, { instrumentId: lab.instrumentId })),
		),
	).toBe(403)
})
