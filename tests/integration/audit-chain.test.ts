import { asc, count, type SQL, sql } from 'drizzle-orm'
import { drizzle } from 'drizzle-orm/postgres-js'
import postgres from 'postgres'
import { expect, test } from 'vitest'
import { db, schema } from '#app/.server/db/client.ts'
import { auditEvents } from '#app/.server/db/schema/audit.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import { makeActor, makeSignedVersion } from '#tests/support/factories.ts'

type Break = { event_id: string; problem: string }

const CONTENT_MISMATCH = 'content does not match its hash'
const BROKEN_LINK = 'link to the previous event does not match'

async function chainBreaks(): Promise<Array<{ eventId: number; problem: string }>> {
	const rows = await db.execute<Break>(
		sql`select b.event_id::text as event_id, b.problem from audit_chain_breaks() b order by b.event_id, b.problem`,
	)
	return [...rows].map((row) => ({ eventId: Number(row.event_id), problem: row.problem }))
}

async function trail() {
	return db.select().from(auditEvents).orderBy(asc(auditEvents.id))
}

/** A realistic trail: accounts created, a specification drafted, submitted, signed twice and made effective. */
async function honestTrail() {
	const author = await makeActor(db, 'author')
	const reviewer = await makeActor(db, 'reviewer')
	const approver = await makeActor(db, 'approver')
	await makeSignedVersion(db, { author, reviewer, approver })
	const events = await trail()
	expect(events.length).toBeGreaterThanOrEqual(10)
	return events
}

/**
 * What a superuser can do behind the application's back: switch off the append-only trigger, run one statement,
 * switch it on again — all in one transaction, so other sessions never see the trigger off.
 */
async function tamper(statement: SQL) {
	await db.transaction(async (tx) => {
		await tx.execute(sql`alter table audit_events disable trigger audit_events_no_update_or_delete`)
		await tx.execute(statement)
		await tx.execute(sql`alter table audit_events enable trigger audit_events_no_update_or_delete`)
	})
}

test('[AUD-010] every event carries the previous event’s hash and its own, and verification finds no break in an honest trail — 21 CFR 11.10(e) — FACTS.md §3.1', async () => {
	const events = await honestTrail()
	expect(events[0]!.prevHash).toBeNull()
	for (const [index, event] of events.entries()) {
		expect(event.hash).toMatch(/^[0-9a-f]{64}$/)
		if (index > 0) expect(event.prevHash, `event ${event.id}`).toBe(events[index - 1]!.hash)
	}
	expect(new Set(events.map((event) => event.hash)).size).toBe(events.length)
	const recomputed = await db.execute<{ matches: boolean }>(
		sql`select hash = audit_event_hash(audit_events) as matches from audit_events`,
	)
	expect([...recomputed].every((row) => row.matches)).toBe(true)
	expect(await chainBreaks()).toEqual([])
})

test('[AUD-011] direct UPDATE, DELETE and TRUNCATE of audit events fail and leave the trail as it was — 21 CFR 11.10(e) — FACTS.md §3.1; EU GMP Annex 11 §9 — FACTS.md §3.2', async () => {
	const events = await honestTrail()
	const middle = events[Math.floor(events.length / 2)]!
	const refused = (operation: string) => ({
		cause: { code: '42501', message: `audit events are append-only: ${operation} refused` },
	})
	await expect(
		db.execute(sql`update audit_events set reason = 'tidied up' where id = ${middle.id}`),
	).rejects.toMatchObject(refused('UPDATE'))
	await expect(db.execute(sql`update audit_events set hash = prev_hash`)).rejects.toMatchObject(refused('UPDATE'))
	await expect(db.execute(sql`delete from audit_events where id = ${middle.id}`)).rejects.toMatchObject(
		refused('DELETE'),
	)
	await expect(db.execute(sql`truncate audit_events`)).rejects.toMatchObject(refused('TRUNCATE'))
	expect(await trail()).toEqual(events)
	expect(await chainBreaks()).toEqual([])
})

test('[AUD-012] an insert cannot choose its own place in the chain: id, prev_hash and hash are set by the database', async () => {
	const events = await honestTrail()
	const last = events.at(-1)!
	await db.execute(sql`insert into audit_events (id, actor_label, action, entity_type, prev_hash, hash)
		values (1, 'forger', 'spec-version.approved', 'spec-version', 'forged', 'forged')`)
	const [added] = await db.execute<{ id: string; prev_hash: string; hash: string }>(
		sql`select id::text, prev_hash, hash from audit_events where actor_label = 'forger'`,
	)
	expect(Number(added!.id)).toBeGreaterThan(last.id)
	expect(added!.prev_hash).toBe(last.hash)
	expect(added!.hash).toMatch(/^[0-9a-f]{64}$/)
	expect(await chainBreaks()).toEqual([])
})

test('[AUD-013] a row changed by a superuser with the trigger disabled is found as a content mismatch, whichever column changed — 21 CFR 11.10(a) — FACTS.md §3.1', async () => {
	const events = await honestTrail()
	const target = events.find((event) => event.action === 'spec-version.sign-approved')!
	const edits: Record<string, SQL> = {
		action: sql`action = 'spec-version.viewed'`,
		'actor label': sql`actor_label = 'someone-else@lab.test'`,
		'actor id': sql`actor_id = null`,
		'time by one microsecond': sql`occurred_at = occurred_at + interval '1 microsecond'`,
		'new value': sql`after = coalesce(after, '{}'::jsonb) || '{"state":"draft"}'`,
		reason: sql`reason = 'added later'`,
		entity: sql`entity_id = 'another-entity'`,
	}
	for (const [changed, edit] of Object.entries(edits)) {
		const [saved] = await db.execute<{ row: unknown }>(
			sql`select to_jsonb(a) as row from audit_events a where id = ${target.id}`,
		)
		await tamper(sql`update audit_events set ${edit} where id = ${target.id}`)
		expect(await chainBreaks(), changed).toEqual([{ eventId: target.id, problem: CONTENT_MISMATCH }])
		// Put the row back as it was (still as the superuser) before the next edit.
		await tamper(sql`update audit_events a set (occurred_at, actor_id, actor_label, action, entity_id, after, reason) =
			(r.occurred_at, r.actor_id, r.actor_label, r.action, r.entity_id, r.after, r.reason)
			from jsonb_populate_record(null::audit_events, ${JSON.stringify(saved!.row)}::jsonb) r where a.id = r.id`)
		expect(await chainBreaks()).toEqual([])
	}
	// The trigger is on again: the application's own connection is refused as before.
	await expect(db.execute(sql`update audit_events set reason = 'again' where id = ${target.id}`)).rejects.toMatchObject(
		{ cause: { code: '42501' } },
	)
})

test('[AUD-014] a forger who also recomputes the changed row’s hash breaks the link to the next event — 21 CFR 11.10(a) — FACTS.md §3.1', async () => {
	const events = await honestTrail()
	const index = events.findIndex((event) => event.action === 'spec-version.sign-approved')
	const target = events[index]!
	await tamper(sql`update audit_events set reason = 'added later' where id = ${target.id}`)
	await tamper(sql`update audit_events set hash = audit_event_hash(audit_events) where id = ${target.id}`)
	expect(await chainBreaks()).toEqual([{ eventId: events[index + 1]!.id, problem: BROKEN_LINK }])
})

test('[AUD-015] an event deleted from the middle is found as a broken link, one deleted from the start as a missing beginning — 21 CFR 11.10(e) — FACTS.md §3.1', async () => {
	const events = await honestTrail()
	await tamper(sql`delete from audit_events where id = ${events[5]!.id}`)
	expect(await chainBreaks()).toEqual([{ eventId: events[6]!.id, problem: BROKEN_LINK }])
	await tamper(sql`delete from audit_events where id = ${events[0]!.id}`)
	expect(await chainBreaks()).toEqual([
		{ eventId: events[1]!.id, problem: 'the chain does not start here: earlier events are missing' },
		{ eventId: events[6]!.id, problem: BROKEN_LINK },
	])
})

test('[AUD-016] events written at once from two connections still form one unbroken chain — common practice, no source', async () => {
	const clients = [
		postgres(process.env.DATABASE_URL!, { max: 4, onnotice: () => {} }),
		postgres(process.env.DATABASE_URL!, { max: 4, onnotice: () => {} }),
	]
	try {
		const [first, second] = clients.map((client) => drizzle({ client, schema, casing: 'snake_case' }))
		const writes = Array.from({ length: 120 }, (_, index) => {
			const on = index % 2 === 0 ? first! : second!
			const entry = {
				actor: { id: null, label: `writer-${index % 2}` },
				action: 'test.concurrent',
				entityType: 'test',
				entityId: String(index),
				after: { index },
			}
			// Every third write is a transaction of two events, as services write them.
			return index % 3 === 0
				? on.transaction(async (tx) => {
						await recordAudit(tx, entry)
						await recordAudit(tx, { ...entry, action: 'test.concurrent-pair' })
					})
				: recordAudit(on, entry)
		})
		await Promise.all(writes)
	} finally {
		await Promise.all(clients.map((client) => client.end({ timeout: 5 })))
	}
	const [written] = await db.select({ rows: count() }).from(auditEvents)
	expect(written!.rows).toBe(120 + 40)
	const events = await trail()
	for (const [index, event] of events.entries()) {
		if (index > 0) expect(event.prevHash, `event ${event.id}`).toBe(events[index - 1]!.hash)
	}
	expect(await chainBreaks()).toEqual([])
})
