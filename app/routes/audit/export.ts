import type { Route } from './+types/export'
import { authorize } from '#app/.server/context.ts'
import { db } from '#app/.server/db/client.ts'
import { AuditQuerySchema, listAuditEventsForExport } from '#app/.server/queries/audit.ts'
import { clientAddress, recordAudit } from '#app/.server/services/audit.ts'

function csvCell(value: unknown): string {
	const text = value === null || value === undefined ? '' : typeof value === 'string' ? value : JSON.stringify(value)
	// NOTE: a leading =, +, - or @ would be run as a formula by spreadsheet programs; prefix it with a quote.
	const safe = /^[=+\-@]/.test(text) ? `'${text}` : text
	return /[",\n\r]/.test(safe) ? `"${safe.replaceAll('"', '""')}"` : safe
}

/** The filtered audit trail as CSV (UTF-8 with BOM, so spreadsheet programs read it right). The export is itself audited. */
export async function loader({ context, request }: Route.LoaderArgs) {
	const actor = authorize(context, 'audit:read')
	const query = AuditQuerySchema.parse(Object.fromEntries(new URL(request.url).searchParams))
	const rows = await listAuditEventsForExport(db, query)
	const header = [
		'id',
		'occurred_at_utc',
		'actor',
		'action',
		'entity_type',
		'entity_id',
		'before',
		'after',
		'reason',
		'ip_address',
		'prev_hash',
		'hash',
	]
	const lines = [header.join(',')]
	for (const row of rows) {
		lines.push(
			[
				row.id,
				row.occurredAt.toISOString(),
				row.actorLabel,
				row.action,
				row.entityType,
				row.entityId,
				row.before,
				row.after,
				row.reason,
				row.ipAddress,
				row.prevHash,
				row.hash,
			]
				.map(csvCell)
				.join(','),
		)
	}
	await recordAudit(db, {
		actor: { id: actor.id, label: actor.email },
		action: 'audit.exported',
		entityType: 'audit',
		after: { rows: rows.length, filters: query },
		ipAddress: clientAddress(request),
	})
	const stamp = new Date().toISOString().slice(0, 19).replaceAll(':', '')
	return new Response(`\uFEFF${lines.join('\r\n')}\r\n`, {
		headers: {
			'Content-Type': 'text/csv; charset=utf-8',
			'Content-Disposition': `attachment; filename="bandproof-audit-${stamp}.csv"`,
		},
	})
}
