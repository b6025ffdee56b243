/**
 * A stored dossier must be served byte-identical at every download, and re-rendering it later must give the same
 * bytes: here the sample is rendered in a fresh Node process and, in this process, after other renders have run
 * (generators inside the libraries keep counters and random ids between documents).
 */
import { execFileSync } from 'node:child_process'
import path from 'node:path'
import { expect, test } from 'vitest'
import { renderDossier } from '#app/.server/render/dossier.ts'
import { loadTemplate, templateDir } from '#app/.server/render/template.ts'
import { draftData, sampleData, withEvidence } from '#tests/unit/dossier/support.ts'

const CHILD = `
import { readFileSync } from 'node:fs'
const { renderDossier } = await import('#app/.server/render/dossier.ts')
const { loadTemplate, templateDir } = await import('#app/.server/render/template.ts')
const data = JSON.parse(readFileSync('templates/dossier/sample-data.json', 'utf8'))
const template = await loadTemplate(templateDir('dossier'))
const out = {}
for (const format of ['pdf', 'docx']) out[format] = (await renderDossier(data, { format, template })).sha256
console.log(JSON.stringify(out))
`

test('[DOS-201] the same data renders to the same bytes in a fresh process (another time zone) and after other documents in this one', async () => {
	const template = await loadTemplate(templateDir('dossier'))
	for (const format of ['pdf', 'docx'] as const) {
		await renderDossier(draftData(), { format, template })
		await renderDossier(withEvidence(sampleData(), 5), { format, template })
	}
	const here = {
		pdf: (await renderDossier(sampleData(), { format: 'pdf', template })).sha256,
		docx: (await renderDossier(sampleData(), { format: 'docx', template })).sha256,
	}
	const tsx = path.resolve(process.cwd(), 'node_modules', '.bin', 'tsx')
	// Another time zone and locale too: nothing may depend on the host's clock settings.
	const env = { ...process.env, TZ: 'Pacific/Chatham', LANG: 'de_DE.UTF-8', LC_ALL: 'de_DE.UTF-8' }
	const output = execFileSync(tsx, ['--input-type=module', '-e', CHILD], {
		cwd: process.cwd(),
		encoding: 'utf8',
		timeout: 60_000,
		env,
	})
	const fresh = JSON.parse(output.trim().split('\n').pop()!) as { pdf: string; docx: string }
	expect(fresh).toEqual(here)
}, 90_000)
