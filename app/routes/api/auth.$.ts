import type { Route } from './+types/auth.$'
import { auth } from '#app/.server/auth.ts'

// better-auth's own endpoints (sign-in, sign-out, session). Sign-up is disabled in its configuration.
export async function loader({ request }: Route.LoaderArgs) {
	return auth().handler(request)
}

export async function action({ request }: Route.ActionArgs) {
	return auth().handler(request)
}
