/**
 * Controlled templates: identified by id, version and a hash of their files; they hold all fixed wording, so a
 * wording change is a template change with a new hash; mistakes in a template fail loudly.
 */
import { cpSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { afterAll, expect, test } from 'vitest'
import { layoutDossier } from '#app/.server/render/dossier.ts'
import { flatBlocks, plainText } from '#app/.server/render/layout.ts'
import { loadTemplate, templateDir, templateSha256 } from '#app/.server/render/template.ts'
import { sampleData } from '#tests/unit/dossier/support.ts'

const scratch = mkdtempSync(path.join(tmpdir(), 'bandproof-template-'))
afterAll(() => rmSync(scratch, { recursive: true, force: true }))

function copyTemplate(name: string): string {
	const dir = path.join(scratch, name)
	cpSync(templateDir('dossier'), dir, { recursive: true })
	return dir
}

function allText(layout: ReturnType<typeof layoutDossier>): string {
	return flatBlocks(layout.blocks)
		.map((block) => {
			switch (block.kind) {
				case 'heading':
					return block.text
				case 'paragraph':
				case 'notice':
					return plainText(block.runs)
				case 'fields':
					return block.rows.map((row) => `${row.label} ${plainText(row.runs)}`).join(' ')
				case 'table':
					return [...(block.head ?? []), ...block.rows.flat()].map((cell) => plainText(cell)).join(' ')
				case 'list':
					return block.items.map((item) => plainText(item)).join(' ')
				case 'figure':
					return plainText(block.caption)
				case 'keep':
				case 'space':
				case 'pagebreak':
					return ''
			}
		})
		.join('\n')
}

test('the shipped dossier template is identified by id, version and the SHA-256 of its files', async () => {
	const template = await loadTemplate(templateDir('dossier'))
	expect(template.id).toBe('dossier')
	expect(template.version).toBe('1.1.0')
	expect(template.sha256).toMatch(/^[0-9a-f]{64}$/)
	expect(template.files.map((file) => file.path)).toEqual(['dossier.hbs', 'labels.json', 'manifest.json'])
	// Sample data sits beside the template but is not part of it.
	expect(template.files.some((file) => file.path === 'sample-data.json')).toBe(false)
	expect((await loadTemplate(templateDir('dossier'))).sha256).toBe(template.sha256)
})

test('the template hash does not depend on the order files are listed or read in', async () => {
	const template = await loadTemplate(templateDir('dossier'))
	expect(templateSha256([...template.files].reverse())).toBe(template.sha256)
})

test('wording lives in the template: changing a sentence changes the dossier and the template hash', async () => {
	const original = await loadTemplate(templateDir('dossier'))
	const dir = copyTemplate('reworded')
	const entry = path.join(dir, 'dossier.hbs')
	writeFileSync(entry, readFileSync(entry, 'utf8').replace('<h1>6 Notes</h1>', '<h1>6 Remarks</h1>'))
	const reworded = await loadTemplate(dir)
	expect(reworded.sha256).not.toBe(original.sha256)
	expect(allText(layoutDossier(sampleData(), reworded))).toContain('6 Remarks')
	expect(allText(layoutDossier(sampleData(), original))).toContain('6 Notes')
})

test('labels for enumerated values come from the template too', async () => {
	const dir = copyTemplate('relabelled')
	const labels = path.join(dir, 'labels.json')
	writeFileSync(labels, readFileSync(labels, 'utf8').replace('"vs": "very strong"', '"vs": "VS (very strong)"'))
	expect(allText(layoutDossier(sampleData(), await loadTemplate(dir)))).toContain('VS (very strong)')
})

test('a template that names a field the data does not have fails instead of printing nothing', async () => {
	const dir = copyTemplate('typo')
	const entry = path.join(dir, 'dossier.hbs')
	writeFileSync(entry, readFileSync(entry, 'utf8').replace('{{document.title}}</p>', '{{document.titel}}</p>'))
	const template = await loadTemplate(dir)
	expect(() => layoutDossier(sampleData(), template)).toThrow(/titel/)
})

test('unknown markup and missing labels are template errors', async () => {
	const unknownBlock = copyTemplate('unknown-block')
	const entry = path.join(unknownBlock, 'dossier.hbs')
	writeFileSync(entry, readFileSync(entry, 'utf8').replace('<h1>1 Scope</h1>', '<marquee>1 Scope</marquee>'))
	await expect(loadTemplate(unknownBlock).then((template) => layoutDossier(sampleData(), template))).rejects.toThrow(
		/unknown block <marquee>/,
	)

	const missingLabel = copyTemplate('missing-label')
	const labels = path.join(missingLabel, 'labels.json')
	writeFileSync(labels, readFileSync(labels, 'utf8').replace('"effective": "Effective",', ''))
	await expect(loadTemplate(missingLabel).then((template) => layoutDossier(sampleData(), template))).rejects.toThrow(
		/label state\.effective/,
	)
})

test('a manifest must list every file it uses', async () => {
	const dir = copyTemplate('unlisted')
	const manifest = path.join(dir, 'manifest.json')
	writeFileSync(
		manifest,
		readFileSync(manifest, 'utf8').replace(
			'"files": ["manifest.json", "dossier.hbs", "labels.json"]',
			'"files": ["dossier.hbs"]',
		),
	)
	await expect(loadTemplate(dir)).rejects.toThrow(/labels\.json is used but not listed/)
})
