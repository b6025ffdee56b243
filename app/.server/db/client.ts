import { drizzle } from 'drizzle-orm/postgres-js'
import postgres from 'postgres'
import * as apiKeysSchema from './schema/api-keys.ts'
import * as audit from './schema/audit.ts'
import * as auth from './schema/auth.ts'
import * as dossiers from './schema/dossiers.ts'
import * as grants from './schema/grants.ts'
import * as materials from './schema/materials.ts'
import * as outbox from './schema/outbox.ts'
import * as roles from './schema/roles.ts'
import * as runs from './schema/runs.ts'
import * as specifications from './schema/specifications.ts'
import * as spectra from './schema/spectra.ts'

export const schema = {
	...auth,
	...roles,
	...materials,
	...audit,
	...spectra,
	...specifications,
	...outbox,
	...dossiers,
	...grants,
	...apiKeysSchema,
	...runs,
}

function connect(url: string) {
	const client = postgres(url, { max: 10, onnotice: () => {} })
	return { client, db: drizzle({ client, schema, casing: 'snake_case' }) }
}

type Connection = ReturnType<typeof connect>
export type Database = Connection['db']
/** A database handle or an open transaction: services take this so callers can compose them in one transaction. */
export type Db = Database | Parameters<Parameters<Database['transaction']>[0]>[0]

let connection: Connection | null = null

function current(): Connection {
	// NOTE: read lazily so that tests can point DATABASE_URL at their own database before first use.
	if (!connection) {
		const url = process.env.DATABASE_URL
		if (!url) throw new Error('DATABASE_URL is not set: start the app through `npm start` or `npm run dev`')
		connection = connect(url)
	}
	return connection
}

/** The application's database, connected on first use. */
export const db: Database = new Proxy({} as Database, {
	get(_target, property) {
		const target = current().db
		const value: unknown = Reflect.get(target, property, target)
		return typeof value === 'function' ? value.bind(target) : value
	},
})

/** Closes the pool (tests and scripts call this before exiting). */
export async function closeDb(): Promise<void> {
	if (connection) {
		await connection.client.end({ timeout: 5 })
		connection = null
	}
}
