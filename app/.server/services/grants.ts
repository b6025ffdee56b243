import { and, asc, desc, eq, inArray } from 'drizzle-orm'
import { z } from 'zod'
import type { Db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { accessGrants } from '#app/.server/db/schema/grants.ts'
import { materials } from '#app/.server/db/schema/materials.ts'
import { userRoles } from '#app/.server/db/schema/roles.ts'
import { specifications, specVersions } from '#app/.server/db/schema/specifications.ts'
import { recordAudit } from '#app/.server/services/audit.ts'
import type { Actor } from '#shared/authz/permissions.ts'
import { grantsCover, grantStatus, isReleased, RELEASED_STATES } from '#shared/authz/grants.ts'
import { DomainError, err, NotFound, ok, type Result } from '#shared/errors.ts'

export const CreateGrantSchema = z
	.object({
		inspectorId: z.string({ message: 'Choose the inspector' }).min(1, 'Choose the inspector'),
		purpose: z
			.string({ message: 'Say who the inspection is for' })
			.trim()
			.min(5, 'Say who the inspection is for')
			.max(300),
		scope: z.enum(['all', 'chosen']),
		specificationIds: z.preprocess(
			(value) => (value === undefined ? [] : Array.isArray(value) ? value : [value]),
			z.array(z.string().uuid()).max(500),
		),
		startsAt: z.iso.date({ message: 'Use a date like 2026-12-01' }),
		endsAt: z.iso.date({ message: 'Use a date like 2026-12-31' }),
	})
	.superRefine((value, ctx) => {
		if (value.endsAt <= value.startsAt)
			ctx.addIssue({ code: 'custom', path: ['endsAt'], message: 'The grant must end after it starts' })
		if (value.scope === 'chosen' && value.specificationIds.length === 0) {
			ctx.addIssue({
				code: 'custom',
				path: ['specificationIds'],
				message: 'Choose at least one specification, or grant all',
			})
		}
	})
export type CreateGrantValues = z.infer<typeof CreateGrantSchema>

/** Grants an inspector read-only access for a window (from the start of `startsAt` to the end of `endsAt`, UTC). */
export async function createGrant(
	db: Db,
	input: { actor: Actor; values: CreateGrantValues; now: Date },
): Promise<Result<{ grantId: string }, DomainError>> {
	return db.transaction(async (tx) => {
		const roles = await tx
			.select({ role: userRoles.role })
			.from(userRoles)
			.where(eq(userRoles.userId, input.values.inspectorId))
		if (!roles.some((row) => row.role === 'inspector'))
			return err(new DomainError('Access grants are for accounts with the inspector role.', 422))
		const startsAt = new Date(`${input.values.startsAt}T00:00:00Z`)
		const endsAt = new Date(new Date(`${input.values.endsAt}T00:00:00Z`).getTime() + 86_400_000)
		const specificationIds = input.values.scope === 'all' ? [] : input.values.specificationIds
		const [row] = await tx
			.insert(accessGrants)
			.values({
				inspectorId: input.values.inspectorId,
				purpose: input.values.purpose,
				allSpecifications: input.values.scope === 'all',
				specificationIds,
				startsAt,
				endsAt,
				grantedBy: input.actor.id,
				grantedAt: input.now,
			})
			.returning({ id: accessGrants.id })
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: 'grant.created',
			entityType: 'grant',
			entityId: row!.id,
			after: {
				inspectorId: input.values.inspectorId,
				purpose: input.values.purpose,
				all: input.values.scope === 'all',
				specificationIds,
				startsAt: startsAt.toISOString(),
				endsAt: endsAt.toISOString(),
			},
			occurredAt: input.now,
		})
		return ok({ grantId: row!.id })
	})
}

/** Ends a grant before its time. */
export async function revokeGrant(
	db: Db,
	input: { actor: Actor; grantId: string; now: Date },
): Promise<Result<true, DomainError>> {
	return db.transaction(async (tx) => {
		const [row] = await tx
			.update(accessGrants)
			.set({ revokedAt: input.now, revokedBy: input.actor.id })
			.where(eq(accessGrants.id, input.grantId))
			.returning()
		if (!row) return err(new NotFound('The grant'))
		await recordAudit(tx, {
			actor: { id: input.actor.id, label: input.actor.email },
			action: 'grant.revoked',
			entityType: 'grant',
			entityId: row.id,
			occurredAt: input.now,
		})
		return ok(true)
	})
}

/** Every grant with its inspector and status, newest first (administration). */
export async function listGrants(db: Db, now: Date) {
	const rows = await db
		.select({ grant: accessGrants, inspectorName: users.name, inspectorEmail: users.email })
		.from(accessGrants)
		.innerJoin(users, eq(users.id, accessGrants.inspectorId))
		.orderBy(desc(accessGrants.startsAt))
	const ids = [...new Set(rows.flatMap((row) => row.grant.specificationIds))]
	const numbers = ids.length
		? new Map(
				(
					await db
						.select({ id: specifications.id, number: specifications.documentNumber })
						.from(specifications)
						.where(inArray(specifications.id, ids))
				).map((spec) => [spec.id, spec.number]),
			)
		: new Map<string, string>()
	return rows.map(({ grant, inspectorName, inspectorEmail }) => ({
		id: grant.id,
		inspectorName,
		inspectorEmail,
		purpose: grant.purpose,
		covers: grant.allSpecifications
			? 'All specifications'
			: grant.specificationIds.map((id) => numbers.get(id) ?? id).join(', '),
		startsAt: grant.startsAt.toISOString(),
		endsAt: grant.endsAt.toISOString(),
		status: grantStatus(grant, now),
	}))
}

/** The inspector's grants that are current now. */
export async function currentGrants(db: Db, inspectorId: string, now: Date) {
	const rows = await db.select().from(accessGrants).where(eq(accessGrants.inspectorId, inspectorId))
	return rows.filter((grant) => grantStatus(grant, now) === 'current')
}

/** What a current grant lets the inspector see: the released versions of the covered specifications. */
export async function listInspectableVersions(db: Db, inspectorId: string, now: Date) {
	const grants = await currentGrants(db, inspectorId, now)
	if (grants.length === 0) return { grants: [], versions: [] }
	const rows = await db
		.select({
			versionId: specVersions.id,
			versionNumber: specVersions.versionNumber,
			state: specVersions.state,
			effectiveAt: specVersions.effectiveAt,
			specificationId: specifications.id,
			documentNumber: specifications.documentNumber,
			title: specifications.title,
			materialName: materials.name,
		})
		.from(specVersions)
		.innerJoin(specifications, eq(specifications.id, specVersions.specificationId))
		.innerJoin(materials, eq(materials.id, specifications.materialId))
		.where(inArray(specVersions.state, [...RELEASED_STATES]))
		.orderBy(asc(specifications.documentNumber), desc(specVersions.versionNumber))
	return {
		grants: grants.map((grant) => ({
			purpose: grant.purpose,
			endsAt: grant.endsAt.toISOString(),
			all: grant.allSpecifications,
		})),
		versions: rows
			.filter((row) => grantsCover(grants, row.specificationId, now))
			.map((row) => ({ ...row, effectiveAt: row.effectiveAt?.toISOString() ?? null })),
	}
}

/**
 * Whether the inspector may see this version now (a current grant covers its specification and it is
 * released), with the grant's purpose and end for the "issued to" line. Null means no.
 */
export async function inspectorAccess(db: Db, inspectorId: string, versionId: string, now: Date) {
	if (!z.uuid().safeParse(versionId).success) return null
	const [version] = await db
		.select({ specificationId: specVersions.specificationId, state: specVersions.state })
		.from(specVersions)
		.where(eq(specVersions.id, versionId))
	if (!version || !isReleased(version.state)) return null
	const grants = await currentGrants(db, inspectorId, now)
	const grant = grants.find((candidate) => grantsCover([candidate], version.specificationId, now))
	return grant ? { purpose: grant.purpose, endsAt: grant.endsAt, specificationId: version.specificationId } : null
}

/**
 * Puts an inspector's view of a released version on record (PRODUCT.md §7: every view and download by an
 * inspector is audited), whether it came through a page or through the API.
 */
export async function recordInspectionView(
	db: Db,
	input: { actor: Actor; versionId: string; via: 'page' | 'api'; purpose: string; ipAddress: string | null; now: Date },
): Promise<void> {
	await recordAudit(db, {
		actor: { id: input.actor.id, label: input.actor.email },
		action: 'inspection.viewed',
		entityType: 'spec-version',
		entityId: input.versionId,
		after: { grant: input.purpose, via: input.via },
		ipAddress: input.ipAddress,
		occurredAt: input.now,
	})
}

/** Accounts that hold the inspector role (for the grant form). */
export async function listInspectors(db: Db) {
	return db
		.select({ id: users.id, name: users.name, email: users.email })
		.from(users)
		.innerJoin(userRoles, and(eq(userRoles.userId, users.id), eq(userRoles.role, 'inspector')))
		.orderBy(asc(users.name))
}
