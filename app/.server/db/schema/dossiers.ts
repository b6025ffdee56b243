import { index, integer, pgEnum, pgTable, text, timestamp, unique, uuid } from 'drizzle-orm/pg-core'
import { users } from './auth.ts'
import { specVersions, versionStateEnum } from './specifications.ts'
import { bytea } from './types.ts'

export const DOSSIER_FORMATS = ['pdf', 'docx'] as const
export const dossierFormatEnum = pgEnum('dossier_format', DOSSIER_FORMATS)

/**
 * A rendered dossier of a signed version, kept byte for byte: rendered once, served identical at every download,
 * and findable by its SHA-256 ("verify a copy"). Records which controlled template made it. A trigger refuses
 * UPDATE and DELETE.
 */
export const dossiers = pgTable(
	'dossiers',
	{
		id: uuid().primaryKey().defaultRandom(),
		versionId: uuid()
			.notNull()
			.references(() => specVersions.id),
		format: dossierFormatEnum().notNull(),
		/** The version's state when rendered: the cover and page marks show it, so each state has its own dossier. */
		versionState: versionStateEnum().notNull(),
		sha256: text().notNull(),
		byteSize: integer().notNull(),
		bytes: bytea().notNull(),
		templateId: text().notNull(),
		templateVersion: text().notNull(),
		templateSha256: text().notNull(),
		controlledCopyNumber: text().notNull(),
		renderedAt: timestamp({ withTimezone: true }).notNull(),
		renderedBy: text().references(() => users.id),
		/**
		 * Null for the dossier itself. For the variant with the identity-runs appendix: the SHA-256 of the RFC 8785
		 * canonical JSON of the runs it lists (app/.server/queries/dossier-runs.ts), so each set of runs, as printed,
		 * is rendered once and served identical, and a newly verified run or a concluded investigation makes a new one.
		 */
		includedRunsSha256: text(),
	},
	(table) => [
		// NULLS NOT DISTINCT (PostgreSQL 15): the plain dossier too is stored once per version, format and state.
		unique().on(table.versionId, table.format, table.versionState, table.includedRunsSha256).nullsNotDistinct(),
		index().on(table.sha256),
	],
)
