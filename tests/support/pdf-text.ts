import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs'

/** Text of each page of a PDF, as a reader's software extracts it (pdfjs-dist, legacy build for Node). */
export async function pdfPageTexts(bytes: Uint8Array): Promise<Array<string>> {
	const pdf = await getDocument({
		data: new Uint8Array(bytes),
		verbosity: 0,
		isEvalSupported: false,
		disableFontFace: true,
	}).promise
	const pages: Array<string> = []
	for (let n = 1; n <= pdf.numPages; n++) {
		const content = await (await pdf.getPage(n)).getTextContent()
		pages.push(
			content.items
				.map((item) => ('str' in item ? item.str : ''))
				.join(' ')
				.replace(/\s+/g, ' ')
				.trim(),
		)
	}
	await pdf.destroy()
	return pages
}
