/**
 * Per-test-file database isolation for the integration project (a Vitest setup file).
 *
 * Each file gets a fresh clone of the migrated template, named after its worker slot, and DATABASE_URL points at it
 * before any test imports the app's db client. Before every test the app tables are emptied again.
 */
import postgres from 'postgres'
import { afterAll, beforeEach, inject } from 'vitest'
import { withDatabase } from '#scripts/postgres-cluster.ts'

const quiet = { max: 1, onnotice: () => {} } as const
const adminUrl = inject('databaseAdminUrl')
const databaseName = `bandproof_test_${process.env.VITEST_POOL_ID ?? '1'}`

const admin = postgres(adminUrl, quiet)
try {
	// FORCE: a clone left by an earlier file or a crashed run may still have connections open.
	await admin`drop database if exists ${admin(databaseName)} with (force)`
	await admin`create database ${admin(databaseName)} template ${admin(inject('databaseTemplate'))}`
} finally {
	await admin.end({ timeout: 5 })
}

const databaseUrl = withDatabase(adminUrl, databaseName)
process.env.DATABASE_URL = databaseUrl

const sql = postgres(databaseUrl, quiet)

/**
 * Tables emptied before each test: every table in `public`, except those the migrations themselves filled
 * (reference data), judged on the fresh clone. Drizzle's bookkeeping lives in its own schema and is never touched.
 */
async function tablesToEmpty(): Promise<Array<string>> {
	const tables = await sql<Array<{ name: string }>>`
		select c.relname as name from pg_class c join pg_namespace n on n.oid = c.relnamespace
		where n.nspname = 'public' and c.relkind in ('r', 'p') and not c.relispartition
			and c.relname <> '__drizzle_migrations'
		order by c.relname`
	const empty: Array<string> = []
	for (const { name } of tables) {
		const [row] = await sql<Array<{ filled: boolean }>>`select exists (select from ${sql(`public.${name}`)}) as filled`
		if (!row?.filled) empty.push(name)
	}
	return empty
}

const tables = await tablesToEmpty()
const [{ superuser } = { superuser: false }] = await sql<Array<{ superuser: boolean }>>`
	select current_setting('is_superuser') = 'on' as superuser`

beforeEach(async () => {
	if (tables.length === 0) return
	await sql.begin(async (tx) => {
		// NOTE: the audit trail refuses TRUNCATE through a trigger; replica mode skips user triggers for this
		// transaction only. It is a superuser setting: the project's test cluster connects as its superuser.
		if (superuser) await tx`set local session_replication_role = replica`
		await tx`truncate table ${tx(tables.map((name) => `public.${name}`))} restart identity cascade`
	})
})

afterAll(async () => {
	const { closeDb } = await import('#app/.server/db/client.ts')
	await closeDb()
	await sql.end({ timeout: 5 })
})
