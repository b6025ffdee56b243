import { redirect } from 'react-router'
import type { Route } from './+types/sign-out'
import { auth } from '#app/.server/auth.ts'
import { resolveActor } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { clientAddress, recordAudit } from '#app/.server/services/audit.ts'

export async function loader() {
	return redirect('/')
}

export async function action({ request }: Route.ActionArgs) {
	const actor = await resolveActor(request)
	if (!actor) return redirect('/sign-in')
	const { headers } = await auth().api.signOut({ headers: request.headers, returnHeaders: true })
	await recordAudit(db, {
		actor: { id: actor.id, label: actor.email },
		action: 'user.signed-out',
		entityType: 'user',
		entityId: actor.id,
		ipAddress: clientAddress(request),
	})
	return redirect('/sign-in', { headers })
}
