import { and, eq } from 'drizzle-orm'
import type { Db } from '#app/.server/db/client.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { Conflict, type DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'
import { type MaterialFormValues, parseSynonyms } from '#shared/materials/material-schema.ts'

/** A refusal tied to one field of the form, so the route can show it beside that field. */
export class FieldConflict extends Conflict {
	constructor(
		readonly field: keyof MaterialFormValues,
		message: string,
	) {
		super(message)
	}
}

function toColumns(values: MaterialFormValues) {
	return {
		code: values.code,
		name: values.name,
		synonyms: parseSynonyms(values.synonyms),
		casNumber: values.casNumber || null,
		formula: values.formula || null,
		grade: values.grade || null,
	}
}

function auditView(row: ReturnType<typeof toColumns>) {
	return { ...row, synonyms: row.synonyms.join('; ') }
}

async function codeTaken(db: Db, code: string, exceptId?: string): Promise<boolean> {
	const [existing] = await db.select({ id: materials.id }).from(materials).where(eq(materials.code, code))
	return Boolean(existing && existing.id !== exceptId)
}

/** Registers a material and records it in the audit trail, in one transaction. */
export async function createMaterial(
	db: Db,
	input: { actor: Actor; values: MaterialFormValues; now: Date },
): Promise<Result<{ id: string }, DomainError>> {
	return db.transaction(async (tx) => {
		const columns = toColumns(input.values)
		if (await codeTaken(tx, columns.code)) {
			return err(new FieldConflict('code', `The code ${columns.code} is already used by another material.`))
		}
		const [row] = await tx
			.insert(materials)
			.values({
				...columns,
				createdBy: input.actor.id,
				updatedBy: input.actor.id,
				createdAt: input.now,
				updatedAt: input.now,
			})
			.returning({ id: materials.id })
		if (!row) throw new Error('material insert returned no row')
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: 'material.created',
			entityType: 'material',
			entityId: row.id,
			after: auditView(columns),
			occurredAt: input.now,
		})
		return ok({ id: row.id })
	})
}

/**
 * Saves an edit made at `revision`. When someone else saved in between, the save is refused (optimistic
 * locking) and nothing is written, so the caller can keep the user's text on screen.
 */
export async function updateMaterial(
	db: Db,
	input: { actor: Actor; id: string; revision: number; values: MaterialFormValues; now: Date },
): Promise<Result<{ revision: number }, DomainError>> {
	return db.transaction(async (tx) => {
		const [current] = await tx.select().from(materials).where(eq(materials.id, input.id)).for('update')
		if (!current) return err(new NotFound('The material'))
		if (current.revision !== input.revision) {
			return err(
				new Conflict(
					'Someone else saved this material after you opened it. Your changes are still in the form: compare them with the current record (open it in a new tab), then save again.',
				),
			)
		}
		const columns = toColumns(input.values)
		if (await codeTaken(tx, columns.code, input.id)) {
			return err(new FieldConflict('code', `The code ${columns.code} is already used by another material.`))
		}
		const [updated] = await tx
			.update(materials)
			.set({ ...columns, revision: current.revision + 1, updatedBy: input.actor.id, updatedAt: input.now })
			.where(and(eq(materials.id, input.id), eq(materials.revision, input.revision)))
			.returning({ revision: materials.revision })
		if (!updated) throw new Error('material update lost its row lock')
		const before = auditView({
			code: current.code,
			name: current.name,
			synonyms: current.synonyms,
			casNumber: current.casNumber,
			formula: current.formula,
			grade: current.grade,
		})
		const after = auditView(columns)
		const changedKeys = Object.keys(after).filter(
			(key) => before[key as keyof typeof before] !== after[key as keyof typeof after],
		) as Array<keyof typeof after>
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: 'material.updated',
			entityType: 'material',
			entityId: input.id,
			before: Object.fromEntries(changedKeys.map((key) => [key, before[key]])),
			after: Object.fromEntries(changedKeys.map((key) => [key, after[key]])),
			occurredAt: input.now,
		})
		return ok({ revision: updated.revision })
	})
}
