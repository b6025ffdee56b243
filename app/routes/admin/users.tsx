import { Link } from 'react-router'
import type { Route } from './+types/users'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { listUsers } from '#app/.server/queries/users.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { buttonVariants } from '#app/components/ui/button.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { StatusBadge } from '#app/components/ui/status-badge.tsx'
import { ROLE_LABELS } from '#shared/authz/permissions.ts'

export async function loader({ context }: Route.LoaderArgs) {
	authorize(context, 'user:manage')
	return { users: await listUsers(db, new Date()) }
}

export default function UsersPage({ loaderData }: Route.ComponentProps) {
	return (
		<>
			<PageHeader
				title="Users and roles"
				description="Personal accounts only. Accounts are deactivated, never deleted, so that names stay on the records they signed."
				actions={
					<Link to="/admin/users/new" className={buttonVariants()}>
						Create an account
					</Link>
				}
			/>
			<div className="bg-sheet border-rule overflow-x-auto rounded-lg border">
				<table className="w-full text-sm">
					<thead className="border-rule bg-paper border-b">
						<tr>
							<th scope="col" className="px-3 py-2 text-left font-semibold">
								Name
							</th>
							<th scope="col" className="px-3 py-2 text-left font-semibold">
								E-mail
							</th>
							<th scope="col" className="px-3 py-2 text-left font-semibold">
								Roles
							</th>
							<th scope="col" className="px-3 py-2 text-left font-semibold">
								Status
							</th>
						</tr>
					</thead>
					<tbody>
						{loaderData.users.map((user) => (
							<tr key={user.id} className="border-rule border-b last:border-0">
								<td className="px-3 py-2 font-medium">
									<Link to={`/admin/users/${user.id}`} className="text-accent underline-offset-4 hover:underline">
										{user.name}
									</Link>
								</td>
								<td className="px-3 py-2">{user.email}</td>
								<td className="px-3 py-2">{user.roles.map((role) => ROLE_LABELS[role]).join(', ')}</td>
								<td className="px-3 py-2">
									<StatusBadge
										tone={user.status === 'active' ? 'good' : user.status === 'locked' ? 'caution' : 'neutral'}
									>
										{user.status === 'active' ? 'Active' : user.status === 'locked' ? 'Locked' : 'Deactivated'}
									</StatusBadge>
								</td>
							</tr>
						))}
					</tbody>
				</table>
			</div>
		</>
	)
}

export function meta() {
	return [{ title: 'Users and roles · Bandproof' }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
