import { date, index, integer, jsonb, pgEnum, pgTable, real, text, timestamp, uuid } from 'drizzle-orm/pg-core'
import { users } from './auth.ts'
import { materials } from './materials.ts'
import { bytea } from './types.ts'

export const SPECTRUM_PURPOSES = ['reference', 'sample', 'instrument-check', 'other'] as const
export const spectrumPurposeEnum = pgEnum('spectrum_purpose', SPECTRUM_PURPOSES)

/**
 * One uploaded spectrum: the original bytes exactly as received (keyed by their SHA-256, so the same file is
 * never stored twice) and the parsed data as little-endian Float64 arrays, absorbance on an ascending
 * wavenumber axis. Once an approved specification version references it, a trigger refuses any change.
 */
export const spectra = pgTable(
	'spectra',
	{
		id: uuid().primaryKey().defaultRandom(),
		sha256: text().notNull().unique(),
		fileName: text().notNull(),
		byteSize: integer().notNull(),
		originalBytes: bytea().notNull(),
		format: text().notNull(),
		title: text(),
		points: integer().notNull(),
		/** Lowest and highest wavenumber of the parsed data, cm⁻¹. */
		minWavenumber: real().notNull(),
		maxWavenumber: real().notNull(),
		xUnits: text().notNull(),
		yUnits: text().notNull(),
		ordinate: text().notNull(),
		x: bytea().notNull(),
		y: bytea().notNull(),
		warnings: jsonb().notNull().default([]),
		labels: jsonb().notNull().default({}),
		parserVersion: text().notNull(),
		// Metadata the uploader gives.
		purpose: spectrumPurposeEnum().notNull().default('reference'),
		materialId: uuid().references(() => materials.id),
		technique: text(),
		instrument: text(),
		resolution: real(),
		acquiredOn: date(),
		referenceStandardName: text(),
		referenceStandardLot: text(),
		notes: text(),
		uploadedBy: text()
			.notNull()
			.references(() => users.id),
		uploadedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
		/** Set when an approved version first references this spectrum; from then on the row is frozen. */
		lockedAt: timestamp({ withTimezone: true }),
	},
	(table) => [index().on(table.materialId), index().on(table.uploadedAt)],
)
