import { parseWithZod } from '@conform-to/zod/v4'
import { data } from 'react-router'
import type { Route } from './+types/$materialId'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { getMaterial } from '#app/.server/queries/materials.ts'
import { FieldConflict, updateMaterial } from '#app/.server/services/materials.ts'
import { redirectWithToast } from '#app/.server/toast.ts'
import { GeneralErrorBoundary } from '#app/components/general-error-boundary.tsx'
import { MaterialForm } from '#app/components/material-form.tsx'
import { PageHeader } from '#app/components/ui/page-header.tsx'
import { formatUtc } from '#app/utils/misc.ts'
import { can } from '#shared/authz/permissions.ts'
import { MaterialEditSchema } from '#shared/materials/material-schema.ts'

export async function loader({ context, params }: Route.LoaderArgs) {
	const actor = authorize(context, 'material:read')
	const material = await getMaterial(db, params.materialId)
	if (!material) throw data({ message: 'This material does not exist, or its address is wrong.' }, { status: 404 })
	return {
		canEdit: can(actor, 'material:edit'),
		material: {
			id: material.id,
			code: material.code,
			name: material.name,
			synonyms: material.synonyms.join('\n'),
			casNumber: material.casNumber ?? '',
			formula: material.formula ?? '',
			grade: material.grade ?? '',
			revision: material.revision,
			updatedAt: material.updatedAt.toISOString(),
		},
	}
}

export async function action({ request, context, params }: Route.ActionArgs) {
	const actor = authorize(context, 'material:edit')
	const submission = parseWithZod(await request.formData(), { schema: MaterialEditSchema })
	if (submission.status !== 'success') return data({ result: submission.reply() }, { status: 400 })
	const { revision, ...values } = submission.value
	const outcome = await updateMaterial(db, { actor, id: params.materialId, revision, values, now: new Date() })
	if (!outcome.ok) {
		const reply =
			outcome.error instanceof FieldConflict
				? submission.reply({ fieldErrors: { [outcome.error.field]: [outcome.error.message] } })
				: submission.reply({ formErrors: [outcome.error.message] })
		return data({ result: reply }, { status: outcome.error.status })
	}
	return redirectWithToast(`/materials/${params.materialId}`, { kind: 'success', title: 'Material saved' })
}

export default function MaterialPage({ loaderData, actionData }: Route.ComponentProps) {
	const { material, canEdit } = loaderData
	return (
		<>
			<PageHeader
				title={`${material.code} · ${material.name}`}
				description={`Revision ${material.revision}, last saved ${formatUtc(material.updatedAt)}`}
			/>
			{canEdit ? (
				<MaterialForm
					key={material.revision}
					lastResult={actionData?.result}
					defaultValue={material}
					submitLabel="Save changes"
				/>
			) : (
				<dl className="bg-sheet border-rule grid max-w-3xl grid-cols-[12rem_1fr] gap-x-4 gap-y-2 rounded-lg border p-6 text-sm">
					<dt className="text-ink-faint">CAS Registry Number</dt>
					<dd>{material.casNumber || '—'}</dd>
					<dt className="text-ink-faint">Formula</dt>
					<dd>{material.formula || '—'}</dd>
					<dt className="text-ink-faint">Grade</dt>
					<dd>{material.grade || '—'}</dd>
					<dt className="text-ink-faint">Synonyms</dt>
					<dd className="whitespace-pre-line">{material.synonyms || '—'}</dd>
				</dl>
			)}
		</>
	)
}

export function meta({ loaderData }: Route.MetaArgs) {
	return [{ title: `${loaderData?.material.code ?? 'Material'} · Bandproof` }]
}

export function ErrorBoundary() {
	return <GeneralErrorBoundary />
}
