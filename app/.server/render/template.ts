/**
 * Controlled document templates (`templates/<id>/`): a manifest, a Handlebars entry that holds the section structure
 * and all fixed wording, and a labels file with the words for enumerated values. A template is identified by its id,
 * its version and the SHA-256 of its files, and every dossier records all three.
 */
import { createHash } from 'node:crypto'
import { readFile } from 'node:fs/promises'
import path from 'node:path'
import Handlebars from 'handlebars'
import { z } from 'zod'

export type TemplateInfo = { id: string; version: string; sha256: string }

export type TemplateFile = { path: string; bytes: Uint8Array }

export type DocumentTemplate = TemplateInfo & {
	title: string
	/** The hashed files, in hashing order. */
	files: ReadonlyArray<TemplateFile>
	/** Expands the template over a view (data already validated) into block markup. Pure: no clock, no I/O. */
	expand: (view: unknown) => string
}

const ManifestSchema = z.object({
	id: z.string().regex(/^[a-z0-9][a-z0-9-]*$/),
	version: z.string().regex(/^\d+\.\d+\.\d+$/, 'a semantic version such as 1.0.0'),
	title: z.string().min(1),
	entry: z.string().min(1),
	labels: z.string().min(1),
	files: z.array(z.string().min(1)).min(1),
})

const LabelsSchema = z.record(z.string(), z.record(z.string(), z.string()))
type Labels = z.infer<typeof LabelsSchema>

/** Folder of a template shipped with the code, e.g. `templates/dossier` under the project root. */
export function templateDir(id: string): string {
	return path.resolve(process.cwd(), 'templates', id)
}

/**
 * SHA-256 over a template's files, stable whatever order they are listed or read in: for each file in code-point
 * order of its path, the UTF-8 path, a NUL, the byte length in decimal, a NUL, then the bytes.
 */
export function templateSha256(files: ReadonlyArray<TemplateFile>): string {
	const hash = createHash('sha256')
	for (const file of sortedFiles(files)) {
		hash.update(`${file.path}\u0000${file.bytes.byteLength}\u0000`, 'utf8')
		hash.update(file.bytes)
	}
	return hash.digest('hex')
}

function sortedFiles(files: ReadonlyArray<TemplateFile>): Array<TemplateFile> {
	return [...files].sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0))
}

/** Reads, checks and compiles the template in `dir`. Every file the manifest lists is hashed, the manifest included. */
export async function loadTemplate(dir: string): Promise<DocumentTemplate> {
	const manifestBytes = await readFile(path.join(dir, 'manifest.json'))
	const manifest = ManifestSchema.parse(JSON.parse(manifestBytes.toString('utf8')))
	const listed = new Set([...manifest.files, 'manifest.json'])
	for (const required of [manifest.entry, manifest.labels]) {
		if (!listed.has(required)) throw new Error(`Template ${manifest.id}: ${required} is used but not listed in files`)
	}
	const files: Array<TemplateFile> = []
	for (const relative of listed) {
		const resolved = path.resolve(dir, relative)
		if (!resolved.startsWith(path.resolve(dir) + path.sep))
			throw new Error(`Template file outside its folder: ${relative}`)
		files.push({ path: relative, bytes: new Uint8Array(await readFile(resolved)) })
	}
	return compileTemplate(manifest, sortedFiles(files))
}

function compileTemplate(manifest: z.infer<typeof ManifestSchema>, files: Array<TemplateFile>): DocumentTemplate {
	const text = (name: string) => new TextDecoder().decode(files.find((file) => file.path === name)!.bytes)
	const labels = LabelsSchema.parse(JSON.parse(text(manifest.labels)))
	const handlebars = Handlebars.create()
	registerHelpers(handlebars, labels, manifest.id)
	// strict: a misspelt field in a template fails the render instead of printing nothing.
	const compiled = handlebars.compile(text(manifest.entry), { strict: true, preventIndent: true })
	return {
		id: manifest.id,
		version: manifest.version,
		sha256: templateSha256(files),
		title: manifest.title,
		files,
		expand: (view) => compiled(view),
	}
}

function isOptions(value: unknown): boolean {
	return typeof value === 'object' && value !== null && 'hash' in value && 'data' in value
}

/** Formatting helpers only: wording lives in the template files, never here. */
function registerHelpers(handlebars: typeof Handlebars, labels: Labels, templateId: string): void {
	handlebars.registerHelper('label', (map: unknown, key: unknown) => {
		const words = labels[String(map)]?.[String(key)]
		if (words === undefined) throw new Error(`Template ${templateId}: no label ${String(map)}.${String(key)}`)
		return words
	})
	handlebars.registerHelper('eq', (a: unknown, b: unknown) => a === b)
	handlebars.registerHelper('isNull', (value: unknown) => value === null)
	handlebars.registerHelper('inc', (value: unknown) => Number(value) + 1)
	handlebars.registerHelper('num', (value: unknown, digits: unknown) =>
		formatNumber(Number(value), isOptions(digits) ? null : Number(digits)),
	)
	handlebars.registerHelper('utc', (iso: unknown) => formatUtc(String(iso)))
	handlebars.registerHelper('day', (iso: unknown) => new Date(String(iso)).toISOString().slice(0, 10))
	handlebars.registerHelper('short', (hash: unknown, length: unknown) => String(hash).slice(0, Number(length)))
	handlebars.registerHelper('paragraphs', (text: unknown) =>
		String(text ?? '')
			.split(/\n+/)
			.map((line) => line.trim())
			.filter((line) => line !== ''),
	)
}

/** Fixed decimals when given, else up to four decimals without trailing zeros. Negative numbers get a true minus. */
export function formatNumber(value: number, digits: number | null): string {
	if (!Number.isFinite(value)) throw new Error(`Not a number: ${value}`)
	const text = digits === null ? String(Number(value.toFixed(4))) : value.toFixed(digits)
	return text.startsWith('-') ? `−${text.slice(1)}` : text
}

/** '2025-03-14T10:42:07+01:00' → '2025-03-14 09:42:07' (the same instant in UTC; the template says "UTC"). */
export function formatUtc(iso: string): string {
	const date = new Date(iso)
	if (Number.isNaN(date.getTime())) throw new Error(`Not a date-time: ${iso}`)
	return date.toISOString().slice(0, 19).replace('T', ' ')
}
