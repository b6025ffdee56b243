import { z } from 'zod'
import type { MailKind } from '#app/.server/db/schema/outbox.ts'
import { formatUtc } from '#app/utils/misc.ts'

/** What every notification about a specification version is made from. Validated before rendering. */
export const MailTemplateDataSchema = z.object({
	documentNumber: z.string().trim().min(1).max(100),
	title: z.string().trim().min(1).max(500),
	versionNumber: z.number().int().positive(),
	/** The person whose step caused the mail. */
	actorName: z.string().trim().min(1).max(200),
	reason: z.string().trim().min(1).max(4000).optional(),
	effectiveFrom: z.date().optional(),
	/** Absolute URL of the version page. */
	link: z.url({ protocol: /^https?$/ }),
})
export type MailTemplateData = z.input<typeof MailTemplateDataSchema>
type Data = z.output<typeof MailTemplateDataSchema>

const RejectedDataSchema = MailTemplateDataSchema.extend({ reason: z.string().trim().min(1).max(4000) })
const EffectiveDataSchema = MailTemplateDataSchema.extend({ effectiveFrom: z.date() })

export type RenderedMail = { subject: string; text: string; html: string }

const FOOTER = 'This message was sent by Bandproof. Replies to it are not read.'

function escapeHtml(value: string): string {
	return value
		.replaceAll('&', '&amp;')
		.replaceAll('<', '&lt;')
		.replaceAll('>', '&gt;')
		.replaceAll('"', '&quot;')
		.replaceAll("'", '&#39;')
}

function versionLabel(data: Data): string {
	return `${data.documentNumber} version ${data.versionNumber}`
}

/** A paragraph holds plain text; `quote` marks one that repeats someone's own words (a reason). */
type Paragraph = { text: string; quote?: boolean }

/**
 * Builds the plain-text and HTML bodies from the same paragraphs, so the two always say the same thing.
 * Every interpolated value is escaped in the HTML body.
 */
function compose(data: Data, subject: string, paragraphs: ReadonlyArray<Paragraph>, action: string): RenderedMail {
	const textBody = [
		...paragraphs.map((paragraph) => (paragraph.quote ? paragraph.text.replace(/^/gm, '> ') : paragraph.text)),
		`${action}: ${data.link}`,
		`-- \n${FOOTER}`,
	].join('\n\n')
	const htmlParagraphs = paragraphs.map((paragraph) =>
		paragraph.quote
			? `<blockquote style="margin:0 0 16px;padding-left:12px;border-left:3px solid #c9c3b3;white-space:pre-wrap">${escapeHtml(paragraph.text)}</blockquote>`
			: `<p style="margin:0 0 16px">${escapeHtml(paragraph.text)}</p>`,
	)
	const html = [
		'<!doctype html>',
		'<html><body style="font-family:Inter,Arial,sans-serif;font-size:14px;line-height:1.5;color:#1d2430">',
		...htmlParagraphs,
		`<p style="margin:0 0 16px"><a href="${escapeHtml(data.link)}" style="color:#2c5c5f">${escapeHtml(action)}</a></p>`,
		`<p style="margin:24px 0 0;font-size:12px;color:#6b7383">${escapeHtml(FOOTER)}</p>`,
		'</body></html>',
	].join('\n')
	return { subject, text: textBody, html }
}

/** An author submitted a version for review. */
export function reviewRequestedMail(input: MailTemplateData): RenderedMail {
	const data = MailTemplateDataSchema.parse(input)
	return compose(
		data,
		`Review requested: ${versionLabel(data)}, ${data.title}`,
		[
			{ text: `${data.actorName} has submitted ${versionLabel(data)}, "${data.title}", for review.` },
			{ text: 'You can redline it or sign it as reviewed from the version page.' },
		],
		'Open the version',
	)
}

/** A reviewer posted redlines on a version. */
export function redlinesPostedMail(input: MailTemplateData): RenderedMail {
	const data = MailTemplateDataSchema.parse(input)
	return compose(
		data,
		`Redlines posted: ${versionLabel(data)}, ${data.title}`,
		[
			{ text: `${data.actorName} has posted redlines on ${versionLabel(data)}, "${data.title}".` },
			{ text: 'The version can be signed once every redline is resolved.' },
		],
		'See the redlines',
	)
}

/** A version was reviewed and now waits for an approval signature. */
export function readyToSignMail(input: MailTemplateData): RenderedMail {
	const data = MailTemplateDataSchema.parse(input)
	return compose(
		data,
		`Ready for approval: ${versionLabel(data)}, ${data.title}`,
		[
			{
				text: `${versionLabel(data)}, "${data.title}", has been reviewed by ${data.actorName} and is ready for approval.`,
			},
			{ text: 'Approving it asks for your password again, as an electronic signature.' },
		],
		'Open the version',
	)
}

/** A version received its approval signature. */
export function approvedMail(input: MailTemplateData): RenderedMail {
	const data = MailTemplateDataSchema.parse(input)
	const when = data.effectiveFrom
		? `It becomes effective on ${formatUtc(data.effectiveFrom)}.`
		: 'It becomes effective once its effective date is set.'
	return compose(
		data,
		`Approved: ${versionLabel(data)}, ${data.title}`,
		[{ text: `${data.actorName} has approved ${versionLabel(data)}, "${data.title}".` }, { text: when }],
		'Open the version',
	)
}

/** A reviewer or approver returned a version to draft, with a reason. */
export function rejectedMail(input: MailTemplateData): RenderedMail {
	const data = RejectedDataSchema.parse(input)
	return compose(
		data,
		`Returned to draft: ${versionLabel(data)}, ${data.title}`,
		[
			{ text: `${data.actorName} has returned ${versionLabel(data)}, "${data.title}", to draft, with this reason:` },
			{ text: data.reason, quote: true },
			{ text: 'Earlier signatures on this version no longer count; it can be revised and submitted again.' },
		],
		'Open the version',
	)
}

/** A version became effective (and any earlier effective version was superseded). */
export function effectiveMail(input: MailTemplateData): RenderedMail {
	const data = EffectiveDataSchema.parse(input)
	return compose(
		data,
		`Now effective: ${versionLabel(data)}, ${data.title}`,
		[
			{ text: `${versionLabel(data)}, "${data.title}", is effective from ${formatUtc(data.effectiveFrom)}.` },
			{
				text: 'Any earlier effective version of this specification is now superseded. Please use this version from now on.',
			},
		],
		'Open the version',
	)
}

const RENDERERS = {
	'review-requested': reviewRequestedMail,
	'redlines-posted': redlinesPostedMail,
	'ready-to-sign': readyToSignMail,
	approved: approvedMail,
	rejected: rejectedMail,
	effective: effectiveMail,
} as const satisfies Record<MailKind, (input: MailTemplateData) => RenderedMail>

/** Renders the template of a kind. Throws (a bug) when the data is invalid, e.g. a rejection without a reason. */
export function renderMail(kind: MailKind, data: MailTemplateData): RenderedMail {
	return RENDERERS[kind](data)
}
