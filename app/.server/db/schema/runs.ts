import {
	type AnyPgColumn,
	boolean,
	date,
	index,
	integer,
	jsonb,
	pgEnum,
	pgTable,
	real,
	text,
	timestamp,
	unique,
	uuid,
} from 'drizzle-orm/pg-core'
import { users } from './auth.ts'
import { materials } from './materials.ts'
import { specifications, specVersions } from './specifications.ts'
import { spectra } from './spectra.ts'

/** A spectrometer the lab measures identity samples on. Its checks decide whether it may be used today. */
export const instruments = pgTable('instruments', {
	id: uuid().primaryKey().defaultRandom(),
	/** The lab's own asset code, e.g. 'IR-02'. */
	code: text().notNull().unique(),
	name: text().notNull(),
	serialNumber: text(),
	location: text(),
	/** How long a passed polystyrene check keeps the instrument usable, in days. */
	checkValidityDays: integer().notNull(),
	/** Which pharmacopoeial table the checks apply (a key of POLYSTYRENE_TABLES). */
	checkTable: text().notNull(),
	retiredAt: timestamp({ withTimezone: true }),
	createdBy: text()
		.notNull()
		.references(() => users.id),
	createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
})

/** One polystyrene wavenumber check of an instrument: never edited, never deleted (trigger). */
export const instrumentChecks = pgTable(
	'instrument_checks',
	{
		id: uuid().primaryKey().defaultRandom(),
		instrumentId: uuid()
			.notNull()
			.references(() => instruments.id),
		spectrumId: uuid()
			.notNull()
			.references(() => spectra.id),
		passed: boolean().notNull(),
		/** The engine's PolystyreneCheck: every band's observed position, deviation and tolerance. */
		result: jsonb().notNull(),
		algorithmVersion: text().notNull(),
		performedBy: text()
			.notNull()
			.references(() => users.id),
		performedAt: timestamp({ withTimezone: true }).notNull(),
		/** performedAt + the instrument's validity period; meaningful only for a passed check. */
		validUntil: timestamp({ withTimezone: true }).notNull(),
		notes: text(),
	},
	(table) => [index().on(table.instrumentId, table.performedAt)],
)

/** A delivery of a starting material: one lot from one supplier in a number of containers. */
export const lots = pgTable(
	'lots',
	{
		id: uuid().primaryKey().defaultRandom(),
		materialId: uuid()
			.notNull()
			.references(() => materials.id),
		lotNumber: text().notNull(),
		supplier: text().notNull(),
		containerCount: integer().notNull(),
		receivedOn: date(),
		createdBy: text()
			.notNull()
			.references(() => users.id),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	},
	(table) => [unique().on(table.materialId, table.supplier, table.lotNumber), index().on(table.materialId)],
)

export const RUN_STATES = ['recorded', 'performed', 'verified'] as const
export const runStateEnum = pgEnum('run_state', RUN_STATES)
export const RUN_OUTCOMES = ['conforms', 'flagged'] as const
export const runOutcomeEnum = pgEnum('run_outcome', RUN_OUTCOMES)
export const INVESTIGATION_CONCLUSIONS = ['confirmed', 'invalidated'] as const
export const investigationConclusionEnum = pgEnum('investigation_conclusion', INVESTIGATION_CONCLUSIONS)

/**
 * One identity test of a lot: every container measured on one instrument and compared with the specification
 * version that was effective when the run was recorded. The outcome is fixed when the run is recorded; a run
 * flagged for investigation stays flagged, and a retest is a new run pointing at it (`retestOfId`).
 */
export const identityRuns = pgTable(
	'identity_runs',
	{
		id: uuid().primaryKey().defaultRandom(),
		/** Lab-readable number, e.g. 'IDR-2026-0007'. */
		runNumber: text().notNull().unique(),
		lotId: uuid()
			.notNull()
			.references(() => lots.id),
		specificationId: uuid()
			.notNull()
			.references(() => specifications.id),
		versionId: uuid()
			.notNull()
			.references(() => specVersions.id),
		instrumentId: uuid()
			.notNull()
			.references(() => instruments.id),
		/** The passed check that made the instrument usable at the time of the run. */
		instrumentCheckId: uuid()
			.notNull()
			.references(() => instrumentChecks.id),
		retestOfId: uuid().references((): AnyPgColumn => identityRuns.id),
		retestReason: text(),
		state: runStateEnum().notNull().default('recorded'),
		outcome: runOutcomeEnum().notNull(),
		/** SHA-256 of the run's canonical record (RFC 8785), fixed when recorded: what both signatures cover. */
		recordSha256: text().notNull(),
		recordedBy: text()
			.notNull()
			.references(() => users.id),
		recordedAt: timestamp({ withTimezone: true }).notNull(),
		investigationConclusion: investigationConclusionEnum(),
		investigationSummary: text(),
		investigationClosedBy: text().references(() => users.id),
		investigationClosedAt: timestamp({ withTimezone: true }),
	},
	(table) => [index().on(table.lotId), index().on(table.recordedAt)],
)

/** One container's sample spectrum and the engine's verdict on it: never edited, never deleted (trigger). */
export const runContainers = pgTable(
	'run_containers',
	{
		id: uuid().primaryKey().defaultRandom(),
		runId: uuid()
			.notNull()
			.references(() => identityRuns.id),
		containerNumber: integer().notNull(),
		spectrumId: uuid()
			.notNull()
			.references(() => spectra.id),
		verdict: text().notNull(),
		correlation: real(),
		derivativeCorrelation: real(),
		/** The engine's Comparison (reasons, bands, flags, grid, params), as stored evidence. */
		result: jsonb().notNull(),
		algorithmVersion: text().notNull(),
	},
	(table) => [unique().on(table.runId, table.containerNumber), index().on(table.spectrumId)],
)

export const RUN_SIGNATURE_MEANINGS = ['performed', 'verified'] as const
export const runSignatureMeaningEnum = pgEnum('run_signature_meaning', RUN_SIGNATURE_MEANINGS)

/** An electronic signature on a run (21 CFR 11.50/11.70): never edited, never deleted (trigger). */
export const runSignatures = pgTable(
	'run_signatures',
	{
		id: uuid().primaryKey().defaultRandom(),
		runId: uuid()
			.notNull()
			.references(() => identityRuns.id),
		signerId: text()
			.notNull()
			.references(() => users.id),
		printedName: text().notNull(),
		meaning: runSignatureMeaningEnum().notNull(),
		statement: text().notNull(),
		signedAt: timestamp({ withTimezone: true }).notNull(),
		signerTimeZone: text().notNull(),
		recordSha256: text().notNull(),
		authentication: text().notNull(),
	},
	(table) => [unique().on(table.runId, table.meaning)],
)
