/**
 * Vitest global set-up of the integration project: brings up the test cluster (or uses DATABASE_URL), keeps a
 * migrated template database current, and hands its coordinates to the workers, which clone it per test file.
 */
import type { TestProject } from 'vitest/node'
import postgres from 'postgres'
import { migrationsFingerprint, runMigrations, startCluster, withDatabase } from '#scripts/postgres-cluster.ts'

// NOTE: module augmentation only works on an interface, hence the exception to `type` here.
declare module 'vitest' {
	export interface ProvidedContext {
		/** URL of a database on the test server that may create and drop databases. */
		databaseAdminUrl: string
		/** Name of the migrated template that each worker clones. */
		databaseTemplate: string
	}
}

const templateName = 'bandproof_test_template'

/**
 * Rebuilds the template only when the migrations changed: the fingerprint of drizzle/ (journal and SQL files) is
 * kept as the template's COMMENT, written after a successful migration so that a failed one is redone next run.
 */
async function prepareTemplate(adminUrl: string): Promise<void> {
	const fingerprint = `migrations:${await migrationsFingerprint()}`
	const admin = postgres(adminUrl, { max: 1, onnotice: () => {} })
	try {
		const rows = await admin<Array<{ note: string | null }>>`
			select shobj_description(oid, 'pg_database') as note from pg_database where datname = ${templateName}`
		if (rows[0]?.note === fingerprint) return
		await admin`drop database if exists ${admin(templateName)} with (force)`
		await admin`create database ${admin(templateName)}`
		await runMigrations(withDatabase(adminUrl, templateName))
		await admin.unsafe(`comment on database "${templateName}" is '${fingerprint}'`)
	} finally {
		await admin.end({ timeout: 5 })
	}
}

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
	const cluster = await startCluster({ purpose: 'test' })
	try {
		await prepareTemplate(cluster.url)
	} catch (error) {
		await cluster.stop()
		throw error
	}
	project.provide('databaseAdminUrl', cluster.url)
	project.provide('databaseTemplate', templateName)
	return async () => {
		await cluster.stop()
	}
}
