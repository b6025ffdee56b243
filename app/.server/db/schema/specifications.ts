import {
	type AnyPgColumn,
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
import { spectra } from './spectra.ts'

export const VERSION_STATES = ['draft', 'in_review', 'approved', 'effective', 'superseded', 'retired'] as const
export const versionStateEnum = pgEnum('version_state', VERSION_STATES)
export const SIGNATURE_MEANINGS = ['reviewed', 'approved'] as const
export const signatureMeaningEnum = pgEnum('signature_meaning', SIGNATURE_MEANINGS)

/** A controlled document: one material's identity-test specification, with its sequence of versions. */
export const specifications = pgTable('specifications', {
	id: uuid().primaryKey().defaultRandom(),
	documentNumber: text().notNull().unique(),
	title: text().notNull(),
	materialId: uuid()
		.notNull()
		.references(() => materials.id),
	ownerId: text()
		.notNull()
		.references(() => users.id),
	createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
})

/**
 * One version of a specification. `content` is the SpecVersionContent document (zod-parsed on read).
 * `revision` counts saves of a draft (optimistic locking). Once `lockedAt` is set (approval), a trigger
 * refuses any change of content and any delete; only the lifecycle columns may still move.
 */
export const specVersions = pgTable(
	'spec_versions',
	{
		id: uuid().primaryKey().defaultRandom(),
		specificationId: uuid()
			.notNull()
			.references(() => specifications.id),
		versionNumber: integer().notNull(),
		state: versionStateEnum().notNull().default('draft'),
		content: jsonb().notNull(),
		changeReason: text(),
		referenceSpectrumId: uuid().references(() => spectra.id),
		revision: integer().notNull().default(1),
		authorId: text()
			.notNull()
			.references(() => users.id),
		/** Everyone who saved this version's content: none of them may sign it (segregation of duties). */
		editorIds: text().array().notNull().default([]),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		submittedAt: timestamp({ withTimezone: true }),
		lastRejectionReason: text(),
		effectiveFrom: timestamp({ withTimezone: true }),
		effectiveAt: timestamp({ withTimezone: true }),
		supersededAt: timestamp({ withTimezone: true }),
		retiredAt: timestamp({ withTimezone: true }),
		contentSha256: text(),
		lockedAt: timestamp({ withTimezone: true }),
	},
	(table) => [unique().on(table.specificationId, table.versionNumber), index().on(table.state)],
)

/** An electronic signature (21 CFR 11.50/11.70): never edited, never deleted (trigger). */
export const signatures = pgTable(
	'signatures',
	{
		id: uuid().primaryKey().defaultRandom(),
		versionId: uuid()
			.notNull()
			.references(() => specVersions.id),
		signerId: text()
			.notNull()
			.references(() => users.id),
		printedName: text().notNull(),
		meaning: signatureMeaningEnum().notNull(),
		statement: text().notNull(),
		signedAt: timestamp({ withTimezone: true }).notNull(),
		signerTimeZone: text().notNull(),
		contentSha256: text().notNull(),
		authentication: text().notNull(),
		/** A later rejection makes earlier signatures void for the next round; they stay on record. */
		voidedAt: timestamp({ withTimezone: true }),
	},
	(table) => [index().on(table.versionId)],
)

export const REDLINE_STATUSES = ['open', 'resolved'] as const
export const redlineStatusEnum = pgEnum('redline_status', REDLINE_STATUSES)

/** A reviewer's comment anchored to a field ('scope', 'method.samplePreparation', …) or a band row ('band:<id>'). */
export const redlines = pgTable(
	'redlines',
	{
		id: uuid().primaryKey().defaultRandom(),
		versionId: uuid()
			.notNull()
			.references(() => specVersions.id),
		parentId: uuid().references((): AnyPgColumn => redlines.id),
		anchor: text().notNull(),
		body: text().notNull(),
		suggestedText: text(),
		status: redlineStatusEnum().notNull().default('open'),
		authorId: text()
			.notNull()
			.references(() => users.id),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		resolvedBy: text().references(() => users.id),
		resolvedAt: timestamp({ withTimezone: true }),
		resolution: text(),
	},
	(table) => [index().on(table.versionId)],
)

export const EVIDENCE_KINDS = ['comparison', 'specificity'] as const
export const evidenceKindEnum = pgEnum('evidence_kind', EVIDENCE_KINDS)

/** A stored computation on a version (a comparison or a specificity check), reproducible from its inputs. */
export const evidence = pgTable(
	'evidence',
	{
		id: uuid().primaryKey().defaultRandom(),
		versionId: uuid()
			.notNull()
			.references(() => specVersions.id),
		kind: evidenceKindEnum().notNull(),
		title: text().notNull(),
		sampleSpectrumId: uuid().references(() => spectra.id),
		verdict: text(),
		correlation: real(),
		result: jsonb().notNull(),
		algorithmVersion: text().notNull(),
		params: jsonb().notNull(),
		inputChecksums: jsonb().notNull(),
		createdBy: text()
			.notNull()
			.references(() => users.id),
		createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
	},
	(table) => [index().on(table.versionId)],
)
