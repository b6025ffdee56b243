/**
 * The role × route matrix: every loader, action and /api/v1 route of app/routes.ts, asked by a user of each role and
 * by an anonymous visitor, through the whole app (tests/support/app-handler.ts: root and layout middleware, route
 * modules, rendered documents), with real sessions from better-auth and real API keys.
 *
 * The expected answers (tests/integration/route-matrix.expectations.ts) come from the permission map in
 * shared/authz/permissions.ts and from HTTP's meaning of the refusals: RFC 9110 §15.5.2 (401, no valid credentials)
 * and §15.5.4 (403, credentials understood, not allowed); that file says how each answer was chosen.
 *
 * Every refused request must leave every application table, the audit trail included, exactly as it was (row counts
 * and a checksum of the rows).
 */
import { eq } from 'drizzle-orm'
import { afterAll, beforeAll, expect, test } from 'vitest'
import { db } from '#app/.server/db/client.ts'
import { identityRuns } from '#app/.server/db/schema/runs.ts'
import { specifications } from '#app/.server/db/schema/specifications.ts'
import { createApiKey } from '#app/.server/services/api-keys.ts'
import { createGrant } from '#app/.server/services/grants.ts'
import { recordIdentityRun, signIdentityRun } from '#app/.server/services/identity-runs.ts'
import { recordInstrumentCheck, registerInstrument } from '#app/.server/services/instruments.ts'
import { startNextVersion } from '#app/.server/services/specifications.ts'
import routeConfig from '#app/routes.ts'
import { type Actor, apiKeyScopesFor, ROLES, type Role } from '#shared/authz/permissions.ts'
import { type AppHandler, startAppHandler } from '#tests/support/app-handler.ts'
import { containerFiles } from '#tests/support/container-samples.ts'
import { makeActor, makeSignedVersion, TEST_PASSWORD, WORKFLOW_REFERENCE_FILE } from '#tests/support/factories.ts'
import { readReferenceFile } from '#tests/support/reference-spectra.ts'
import {
	type Cell,
	cellOf,
	changedTables,
	EVERYONE,
	fill,
	fingerprintDatabase,
	isRefusal,
	leafRouteOf,
	type MatrixRow,
	parseMatrix,
	toRouteObjects,
	walkRoutes,
	type Who,
} from '#tests/support/route-matrix.ts'
import { MATRIX, REQUESTS, type RequestSpec } from './route-matrix.expectations.ts'

// The app's public URL: the origin the cross-site guard and better-auth accept (read when the app first needs it).
const BASE = 'http://localhost:3999'
process.env.BETTER_AUTH_URL = BASE

const DAY = 86_400_000
const isoDay = (date: Date) => date.toISOString().slice(0, 10)

let app: AppHandler

beforeAll(async () => {
	app = await startAppHandler()
}, 120_000)

afterAll(async () => {
	await app?.close()
})

const rows = parseMatrix(MATRIX)
const configured = walkRoutes(routeConfig)
const routeObjects = toRouteObjects(routeConfig)
const rowKey = (row: MatrixRow) => `${row.method} ${row.url}`

/** The methods a route must have rows for: GET when it has a loader or renders a page, POST when it has an action. */
function methodsOf(module: { loader?: unknown; action?: unknown; default?: unknown }): Array<'GET' | 'POST'> {
	const methods: Array<'GET' | 'POST'> = []
	if (typeof module.loader === 'function' || typeof module.default === 'function') methods.push('GET')
	if (typeof module.action === 'function') methods.push('POST')
	return methods
}

test('[SEC-110] every route of app/routes.ts has a row in the matrix for each of its methods, and no row is stale', () => {
	const leaves = configured.filter((route) => route.leaf)
	// The walk of app/routes.ts agrees with the server build React Router made from the same file.
	expect(configured.map((route) => route.id).sort()).toEqual(
		Object.keys(app.build.routes)
			.filter((id) => id !== 'root')
			.sort(),
	)
	expect(leaves.length).toBeGreaterThan(40)

	const covered = new Map<string, Set<string>>()
	const strays: Array<string> = []
	for (const row of rows) {
		const pathname = new URL(row.url.split('#')[0]!, BASE).pathname
		const id = leafRouteOf(routeObjects, pathname)
		if (!id) {
			strays.push(`${rowKey(row)} matches no route`)
			continue
		}
		const methods = methodsOf(app.build.routes[id]!.module)
		if (!methods.includes(row.method)) strays.push(`${rowKey(row)}: ${id} has no ${row.method} handler`)
		covered.set(id, (covered.get(id) ?? new Set()).add(row.method))
	}
	const missing = leaves.flatMap((route) =>
		methodsOf(app.build.routes[route.id]!.module)
			.filter((method) => !covered.get(route.id)?.has(method))
			.map((method) => `${method} ${route.pattern} (app/${route.file}) has no row in route-matrix.expectations.ts`),
	)
	expect(missing).toEqual([])
	expect(strays).toEqual([])
	const rowKeys = new Set(rows.map(rowKey))
	expect(Object.keys(REQUESTS).filter((key) => !rowKeys.has(key))).toEqual([])
})

/** Signs in through the sign-in page, as a browser does; returns the Cookie header of the new session. */
async function signIn(actor: Actor): Promise<string> {
	const body = new URLSearchParams({ email: actor.email, password: TEST_PASSWORD })
	const response = await app.fetch(
		new Request(`${BASE}/sign-in`, {
			method: 'POST',
			body,
			headers: { Origin: BASE, 'Content-Length': String(body.toString().length) },
		}),
	)
	expect(response.status, `signing in ${actor.email}`).toBe(302)
	const cookies = response.headers
		.getSetCookie()
		.map((line) => line.split(';')[0]!)
		.filter((pair) => pair.startsWith('bandproof.'))
	expect(cookies.join('; ')).toContain('bandproof.session_token=')
	return cookies.join('; ')
}

type Fixtures = {
	people: Record<Role, Actor>
	cookies: Record<Role, string>
	keys: Record<Role, string>
	values: Record<string, string>
}

/** The real polystyrene film of the shared set that passes the Ph. Eur. 2.2.24 FT table (SOURCES.md). */
const POLYSTYRENE_FILM = 'polystyrene/ps_film_pe1600_2cm_DIFDUP.jdx'
/** 3-chloroaniline, the positional isomer of the reference compound: SOURCES.md lists it as "must not match". */
const ISOMER = 'compounds/3_chloroaniline_pe1000.jdx'

/**
 * An instrument with a passing check, and a lot of the other specification's material whose identity run is flagged
 * (container 1 a replicate of the reference spectrum, container 2 the isomer), signed by the analyst and verified by
 * the reviewer: its investigation is open, so a retest may be recorded and an approver may conclude it.
 */
async function releaseTesting(people: Record<Role, Actor>, specificationId: string, now: Date) {
	const instrument = await registerInstrument(db, {
		actor: people.admin,
		values: {
			code: 'IR-MATRIX',
			name: 'Bench FTIR',
			serialNumber: null,
			location: 'QC lab 2',
			checkValidityDays: 30,
			checkTable: 'ph-eur-ft',
		},
		now,
	})
	if (!instrument.ok) throw instrument.error
	const check = await recordInstrumentCheck(db, {
		actor: people.analyst,
		instrumentId: instrument.value.id,
		fileName: 'ps-film.jdx',
		bytes: readReferenceFile(POLYSTYRENE_FILM),
		notes: null,
		now,
	})
	if (!check.ok) throw check.error
	expect(check.value.passed).toBe(true)
	const lotNumber = 'L-MATRIX-1'
	const run = await recordIdentityRun(db, {
		kind: 'first',
		actor: people.analyst,
		specificationId,
		lot: { lotNumber, supplier: 'Northbridge Fine Chemicals', containerCount: 2, receivedOn: isoDay(now) },
		instrumentId: instrument.value.id,
		files: containerFiles(lotNumber, [{ relPath: WORKFLOW_REFERENCE_FILE, seed: 1 }, { relPath: ISOMER }]),
		now,
	})
	if (!run.ok) throw run.error
	expect(run.value.outcome).toBe('flagged')
	for (const [actor, intent] of [
		[people.analyst, 'sign-performed'],
		[people.reviewer, 'verify'],
	] as const) {
		const signed = await signIdentityRun(db, { actor, runId: run.value.runId, intent, now })
		if (!signed.ok) throw signed.error
	}
	const [recorded] = await db
		.select({ lotId: identityRuns.lotId })
		.from(identityRuns)
		.where(eq(identityRuns.id, run.value.runId))
	return { instrumentId: instrument.value.id, lotId: recorded!.lotId, runId: run.value.runId }
}

/**
 * One user per role, an effective version covered by the inspector's grant and the draft that follows it, an
 * effective version of another specification outside the grant, an instrument and a lot tested against that other
 * specification (see releaseTesting), and for each user a session and an API key with the widest scopes their
 * roles allow.
 */
async function fixtures(): Promise<Fixtures> {
	const now = new Date()
	const people = {} as Record<Role, Actor>
	for (const role of ROLES) people[role] = await makeActor(db, role)
	const cast = { author: people.author, reviewer: people.reviewer, approver: people.approver }
	const released = await makeSignedVersion(db, cast)
	const other = await makeSignedVersion(db, cast)
	expect([released.state, other.state]).toEqual(['effective', 'effective'])
	const next = await startNextVersion(db, {
		actor: people.author,
		specificationId: released.specificationId,
		changeReason: 'Tighten the ring-stretch tolerance after the method transfer.',
		now,
	})
	if (!next.ok) throw next.error
	const granted = await createGrant(db, {
		actor: people.admin,
		values: {
			inspectorId: people.inspector.id,
			purpose: 'Regulatory inspection',
			scope: 'chosen',
			specificationIds: [released.specificationId],
			startsAt: isoDay(now),
			endsAt: isoDay(new Date(now.getTime() + 7 * DAY)),
		},
		now,
	})
	if (!granted.ok) throw granted.error
	const testing = await releaseTesting(people, other.specificationId, now)
	const [specification] = await db
		.select({ materialId: specifications.materialId })
		.from(specifications)
		.where(eq(specifications.id, released.specificationId))
	const cookies = {} as Record<Role, string>
	const keys = {} as Record<Role, string>
	for (const role of ROLES) {
		cookies[role] = await signIn(people[role])
		const key = await createApiKey(db, {
			actor: people[role],
			name: `matrix ${role}`,
			scopes: apiKeyScopesFor(people[role]),
			now,
		})
		if (!key.ok) throw key.error
		keys[role] = key.value.token
	}
	return {
		people,
		cookies,
		keys,
		values: {
			specId: released.specificationId,
			versionId: released.versionId,
			draftVersionId: next.value.versionId,
			otherVersionId: other.versionId,
			materialId: specification!.materialId,
			spectrumId: released.referenceSpectrumId,
			userId: people.author.id,
			instrumentId: testing.instrumentId,
			lotId: testing.lotId,
			runId: testing.runId,
			unknownId: crypto.randomUUID(),
			password: TEST_PASSWORD,
		},
	}
}

function fillBody(value: unknown, values: Record<string, string>): unknown {
	if (typeof value === 'string') return fill(value, values)
	if (Array.isArray(value)) return value.map((item) => fillBody(item, values))
	if (value && typeof value === 'object')
		return Object.fromEntries(Object.entries(value).map(([name, item]) => [name, fillBody(item, values)]))
	return value
}

/** The body a browser or a script would send, with its Content-Type and Content-Length, as bytes. */
async function encodeBody(
	spec: RequestSpec | undefined,
	values: Record<string, string>,
): Promise<{ body: ArrayBuffer; type: string }> {
	let init: BodyInit
	if (spec && 'json' in spec) {
		const encoded = new Response(JSON.stringify(fillBody(spec.json, values)))
		return { body: await encoded.arrayBuffer(), type: 'application/json' }
	}
	if (spec && 'multipart' in spec) {
		const form = new FormData()
		for (const [name, value] of Object.entries(spec.multipart)) form.append(name, fill(value, values))
		init = form
	} else {
		const fields = spec && 'form' in spec ? (fillBody(spec.form, values) as Record<string, string>) : {}
		init = new URLSearchParams(fields)
	}
	const encoded = new Response(init)
	return { body: await encoded.arrayBuffer(), type: encoded.headers.get('Content-Type')! }
}

/** The request a browser (pages) or a script with an API key (/api/v1) would send for one cell of the matrix. */
async function requestFor(row: MatrixRow, who: Who, given: Fixtures): Promise<Request> {
	const spec = REQUESTS[rowKey(row)]
	const url = new URL(fill(row.url.split('#')[0]!, given.values), BASE)
	const headers = new Headers()
	if (who !== 'anonymous') {
		if (url.pathname.startsWith('/api/v1/')) headers.set('Authorization', `Bearer ${given.keys[who]}`)
		else headers.set('Cookie', spec && 'freshSession' in spec ? await signIn(given.people[who]) : given.cookies[who])
	}
	if (row.method === 'GET') return new Request(url, { headers })
	const { body, type } = await encodeBody(spec, given.values)
	headers.set('Origin', BASE)
	headers.set('Content-Type', type)
	headers.set('Content-Length', String(body.byteLength))
	return new Request(url, { method: 'POST', headers, body })
}

/** How many requests are in flight at once: a handful, as from a few browser tabs and scripts. */
const IN_FLIGHT = 6

/** Sends the requests, several at a time, and reads every answer to its end. */
async function answer(requests: Array<Request>): Promise<Array<Cell>> {
	const answers: Array<Cell> = []
	let next = 0
	const worker = async () => {
		while (next < requests.length) {
			const index = next++
			const response = await app.fetch(requests[index]!)
			await response.arrayBuffer()
			answers[index] = cellOf(response)
		}
	}
	await Promise.all(Array.from({ length: IN_FLIGHT }, worker))
	return answers
}

type MatrixCell = { row: MatrixRow; who: Who }
const cellName = ({ row, who }: MatrixCell) => `${rowKey(row)} as ${who}`

/** One table row per request, aligned like the expectation table, so that a failure shows the cells that differ. */
function line(row: MatrixRow, cells: Record<Who, Cell>): string {
	return [row.method.padEnd(5), row.url.padEnd(61), ...EVERYONE.map((who) => cells[who].padEnd(6))].join(' ').trim()
}

test('[SEC-111] each role and an anonymous visitor get the expected answer from every route; a refusal changes nothing', async () => {
	const given = await fixtures()
	const cells = rows.flatMap((row) => EVERYONE.map((who): MatrixCell => ({ row, who })))
	// The requests expected to be refused go first, all of them between two fingerprints of the database; then the
	// allowed ones, which may record views, downloads and sign-ins.
	const refused = cells.filter(({ row, who }) => isRefusal(row.expected[who]))
	const allowed = cells.filter((cell) => !refused.includes(cell))
	// Each request is made (and a fresh session signed in where one is needed) before the first fingerprint.
	const requestsFor = (some: Array<MatrixCell>) => Promise.all(some.map(({ row, who }) => requestFor(row, who, given)))
	const refusedRequests = await requestsFor(refused)
	const before = await fingerprintDatabase(db)
	const refusedAnswers = await answer(refusedRequests)
	const changedByRefusals = changedTables(before, await fingerprintDatabase(db))
	const changedBy: Array<string> = []
	if (changedByRefusals.length > 0) {
		// Something changed: ask again one at a time to name the request (a change that cannot happen twice stays
		// unnamed, but the tables it touched are reported below).
		for (const cell of refused) {
			const [request] = await requestsFor([cell])
			const at = await fingerprintDatabase(db)
			await answer([request!])
			const changed = changedTables(at, await fingerprintDatabase(db))
			if (changed.length > 0) changedBy.push(`${cellName(cell)}: ${changed.join('; ')}`)
		}
	}
	const allowedAnswers = await answer(await requestsFor(allowed))

	const actual = new Map<MatrixCell, Cell>([
		...refused.map((cell, i): [MatrixCell, Cell] => [cell, refusedAnswers[i]!]),
		...allowed.map((cell, i): [MatrixCell, Cell] => [cell, allowedAnswers[i]!]),
	])
	const table = (pick: (cell: MatrixCell) => Cell) =>
		rows.map((row) => {
			const answers = Object.fromEntries(
				cells.filter((cell) => cell.row === row).map((cell) => [cell.who, pick(cell)]),
			) as Record<Who, Cell>
			return line(row, answers)
		})
	expect.soft(table((cell) => actual.get(cell)!)).toEqual(table(({ row, who }) => row.expected[who]))
	expect({ changedByRefusals, changedBy }).toEqual({ changedByRefusals: [], changedBy: [] })
}, 120_000)
