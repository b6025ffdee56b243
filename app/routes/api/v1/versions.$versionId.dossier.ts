import { eq } from 'drizzle-orm'
import { apiRoute, notFound } from '#app/.server/api.ts'
import { db } from '#app/.server/db/client.ts'
import { users } from '#app/.server/db/schema/auth.ts'
import { visibleVersion } from '#app/.server/queries/api.ts'
import { clientAddress } from '#app/.server/services/audit.ts'
import { getDossier } from '#app/.server/services/dossiers.ts'
import { inspectorAccess } from '#app/.server/services/grants.ts'

/** The version's dossier as PDF; an inspector gets their own "issued to … for inspection" copy, as in the app. */
export const loader = apiRoute({ scope: 'read', permission: 'spec:read', inspectorsByGrant: true }, async (input) => {
	const version = await visibleVersion(db, input)
	if (!version) notFound('The version')
	let inspectionLine: string | undefined
	if (input.byGrant) {
		const access = await inspectorAccess(db, input.actor.id, version.id, input.now)
		if (!access) notFound('The version')
		const [person] = await db.select({ name: users.name }).from(users).where(eq(users.id, input.actor.id))
		inspectionLine = `Issued to ${person?.name ?? input.actor.email} on ${input.now.toISOString().slice(0, 10)} for inspection (${access.purpose}); read-only access until ${access.endsAt.toISOString().slice(0, 10)}.`
	}
	const file = await getDossier(db, {
		actor: input.actor,
		versionId: version.id,
		format: 'pdf',
		now: input.now,
		ipAddress: clientAddress(input.request),
		purpose: 'download',
		inspectionLine,
	})
	if (!file) notFound('The version')
	return new Response(new Uint8Array(file.bytes), {
		headers: {
			'Content-Type': 'application/pdf',
			'Content-Disposition': `attachment; filename="${file.fileName.replace(/\.pdf$/, '')}.pdf"`,
			'Cache-Control': 'private, no-store',
		},
	})
})
