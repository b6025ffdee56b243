/**
 * JCAMP-DX reader for infrared spectra (versions 4.24 and 5.x). Pure.
 *
 * Our own decoder rather than a parser package: we need the line of every problem, the DIF Y-check and the
 * header/data consistency checks, and the one maintained package is under a non-commercial licence.
 *
 * Reference: McDonald & Wilks 1988, Applied Spectroscopy 42:151 (JCAMP-DX 4.24: labelled data records,
 * `(X++(Y..Y))`, ASDF compression, the DIF Y-check); Lampen et al. 1999 (5.x: LINK blocks, BLOCK_ID).
 */
import { err, ok, type Result } from '#shared/errors.ts'
import { SpectrumImportError } from '#shared/spectra/import-error.ts'
import {
	MAX_POINTS,
	finishSpectrum,
	parseXUnits,
	parseYUnits,
	type DeclaredOrdinate,
	type XUnitKind,
} from '#shared/spectra/import-finish.ts'
import type { ImportWarning, ImportedSpectrum } from '#shared/spectra/types.ts'

/** One labelled data record (LDR). */
type Ldr = {
	/** Normalised key: upper case without spaces, hyphens, slashes or underscores (JCAMP-DX label matching). */
	key: string
	/** Upper-case label as written, runs of blanks collapsed: the key of metadata.labels. */
	name: string
	/** Value as written, continuation lines joined with '\n'. */
	value: string
	line: number
}

type TableKind = 'XYDATA' | 'XYPOINTS' | 'PEAKTABLE' | 'OTHER'

/** A data table: its label line and the character range of its data lines. */
type Table = {
	kind: TableKind
	name: string
	variables: string
	line: number
	start: number
	end: number
	firstLine: number
	/** Line of the record after the table (or one past the last line). */
	nextLine: number
}

type Block = {
	ldrs: Array<Ldr>
	byKey: Map<string, Ldr>
	children: Array<Block>
	parent: Block | null
	line: number
	endLine: number | null
	tables: Array<Table>
	hasNtuples: boolean
	repeats: Array<{ first: Ldr; again: Ldr }>
}

/** Labels whose values the decoding depends on: repeating them with another value is refused. */
const CORE_KEYS = new Set(['XUNITS', 'YUNITS', 'XFACTOR', 'YFACTOR', 'FIRSTX', 'LASTX', 'NPOINTS', 'DATATYPE'])

const TABLE_KEYS: Record<string, TableKind> = {
	XYDATA: 'XYDATA',
	XYPOINTS: 'XYPOINTS',
	PEAKTABLE: 'PEAKTABLE',
	DATATABLE: 'OTHER',
	RADATA: 'OTHER',
}

export type JcampImportOptions = {
	/** Refuse data that expand beyond this many points (DUP counts can expand a small file enormously). */
	maxPoints?: number
}

/**
 * Read the infrared spectrum in a JCAMP-DX text. `text` is the decoded file (any line endings).
 * Picks the first infrared block of a LINK file (warning when there are several), refuses non-infrared files,
 * decodes AFFN, PAC, SQZ, DIF and DUP forms with the DIF Y-check, `(XY..XY)` point and peak tables, applies
 * XFACTOR/YFACTOR and checks FIRSTX, LASTX and NPOINTS against the data.
 * Result: absorbance on a strictly ascending cm⁻¹ axis; every refusal names the line or label. Never throws
 * for bad input.
 */
export function importJcamp(
	text: string,
	options: JcampImportOptions = {},
): Result<ImportedSpectrum, SpectrumImportError> {
	try {
		return readJcamp(text.includes('\r') ? text.replace(/\r\n?/g, '\n') : text, options.maxPoints ?? MAX_POINTS)
	} catch (e) {
		if (e instanceof SpectrumImportError) return err(e)
		throw e
	}
}

function readJcamp(text: string, maxPoints: number): Result<ImportedSpectrum, SpectrumImportError> {
	const warnings: Array<ImportWarning> = []
	const roots = scanBlocks(text, warnings)
	const leaves: Array<Block> = []
	const collect = (b: Block) => {
		if (isLink(b) || (b.children.length > 0 && b.tables.length === 0)) b.children.forEach(collect)
		else leaves.push(b)
	}
	roots.forEach(collect)
	if (leaves.length === 0) {
		throw new SpectrumImportError('no-data', 'no ##TITLE= block with data was found in this JCAMP-DX file')
	}
	const infrared = leaves.filter(isInfrared)
	if (infrared.length === 0) {
		const kinds = [...new Set(leaves.map((b) => value(b, 'DATATYPE') || 'unnamed'))].join(', ')
		const first = leaves[0]!
		const where = first.byKey.get('DATATYPE')?.line ?? first.line
		throw new SpectrumImportError(
			'not-infrared',
			`this file holds ${kinds} data (##DATA TYPE=), not an infrared spectrum; only infrared spectra can be imported`,
			where,
		)
	}
	const block = infrared[0]!
	if (infrared.length > 1) {
		warnings.push({
			code: 'several-blocks',
			message: `the file holds ${infrared.length} infrared blocks; the first ("${title(block) ?? 'untitled'}", line ${block.line}) was imported`,
			line: block.line,
		})
	}
	const ignored = leaves.length - infrared.length
	if (ignored > 0) {
		const kinds = [...new Set(leaves.filter((b) => !isInfrared(b)).map((b) => value(b, 'DATATYPE') || 'unnamed'))]
		warnings.push({
			code: 'other-blocks-ignored',
			message: `${ignored} block${ignored === 1 ? '' : 's'} of other data (${kinds.join(', ')}) ${ignored === 1 ? 'was' : 'were'} ignored`,
		})
	}
	for (const { first, again } of block.repeats) {
		if (CORE_KEYS.has(first.key) && stripComment(first.value) !== stripComment(again.value)) {
			throw new SpectrumImportError(
				'repeated-label',
				`##${again.name}= is given again with another value (first on line ${first.line}); it is not clear which one holds`,
				again.line,
			)
		}
		warnings.push({
			code: 'repeated-label',
			message: `##${again.name}= appears again (first on line ${first.line}); the first value was kept`,
			line: again.line,
		})
	}
	return readBlock(text, block, warnings, maxPoints)
}

function readBlock(
	text: string,
	block: Block,
	warnings: Array<ImportWarning>,
	maxPoints: number,
): Result<ImportedSpectrum, SpectrumImportError> {
	if (block.hasNtuples && block.tables.every((t) => t.kind === 'OTHER')) {
		throw new SpectrumImportError(
			'unsupported',
			'##NTUPLES= tables are not supported; export the spectrum as ##XYDATA=',
			block.line,
		)
	}
	const table = block.tables.find((t) => t.kind !== 'OTHER')
	if (!table) {
		const other = block.tables[0]
		if (other) {
			throw new SpectrumImportError(
				'unsupported',
				`the ##${other.name}= table is not supported; only ##XYDATA=, ##XYPOINTS= and ##PEAK TABLE= are read`,
				other.line,
			)
		}
		throw new SpectrumImportError(
			'no-data',
			`the infrared block ("${title(block) ?? 'untitled'}", line ${block.line}) has no ##XYDATA=, ##XYPOINTS= or ##PEAK TABLE= data table`,
			block.endLine ?? undefined,
		)
	}
	if (block.tables.filter((t) => t.kind !== 'OTHER').length > 1) {
		warnings.push({
			code: 'several-tables',
			message: `the block holds several data tables; the first (line ${table.line}) was read`,
			line: table.line,
		})
	}
	const { xUnit, ordinate, xUnitsText, yUnitsText } = readUnits(block)
	const xFactor = numberLabel(block, 'XFACTOR') ?? 1
	const yFactor = numberLabel(block, 'YFACTOR') ?? 1
	if (xFactor === 0 || yFactor === 0) {
		const key = xFactor === 0 ? 'XFACTOR' : 'YFACTOR'
		throw new SpectrumImportError('bad-number', `##${key}= is zero`, block.byKey.get(key)!.line)
	}
	const nPointsLabel = numberLabel(block, 'NPOINTS')
	const firstXLabel = numberLabel(block, 'FIRSTX')
	const lastXLabel = numberLabel(block, 'LASTX')
	const firstYLabel = numberLabel(block, 'FIRSTY')

	let x: Float64Array
	let y: Float64Array
	let fileFirstX: number
	let fileLastX: number
	let dataForm: string
	if (table.kind === 'XYDATA') {
		if (compact(table.variables) !== '(X++(Y..Y))') {
			throw new SpectrumImportError(
				'unsupported',
				`##XYDATA= ${table.variables.trim()} is not supported; infrared data use (X++(Y..Y))`,
				table.line,
			)
		}
		const hint = nPointsLabel !== null && nPointsLabel > 0 && nPointsLabel <= maxPoints ? nPointsLabel : 1024
		const decoded = decodeXyData(text, table, hint, maxPoints)
		dataForm = decoded.form
		const n = decoded.count
		if (n === 0) throw new SpectrumImportError('no-data', 'the ##XYDATA= table holds no values', table.line)
		if (nPointsLabel !== null && n !== nPointsLabel) {
			const npLine = block.byKey.get('NPOINTS')!.line
			if (block.endLine === null && n < nPointsLabel) {
				throw new SpectrumImportError(
					'truncated',
					`the file ends without ##END=, after ${n} of the ${nPointsLabel} points announced by ##NPOINTS= (line ${npLine}); it seems cut short`,
					lastDataLine(text, table),
				)
			}
			throw new SpectrumImportError(
				'npoints',
				`##NPOINTS= ${nPointsLabel} but the ##XYDATA= table (lines ${table.firstLine}–${lastDataLine(text, table)}) holds ${n} points`,
				npLine,
			)
		}
		if (nPointsLabel === null)
			warnings.push({
				code: 'missing-label',
				message: '##NPOINTS= is missing; the point count was taken from the data',
			})
		const grid = checkAbscissae(block, decoded, xFactor, firstXLabel, lastXLabel)
		fileFirstX = grid.firstX
		fileLastX = grid.lastX
		x = new Float64Array(n)
		y = new Float64Array(n)
		const step = n > 1 ? (grid.lastX - grid.firstX) / (n - 1) : 0
		const raw = decoded.y
		for (let i = 0; i < n; i++) {
			x[i] = grid.firstX + i * step
			y[i] = raw[i]! * yFactor
		}
		x[n - 1] = grid.lastX
		if (firstYLabel !== null) checkFirstY(block, firstYLabel, y[0]!, raw, yFactor, warnings)
	} else {
		const points = decodePoints(text, table, maxPoints)
		dataForm = table.kind === 'PEAKTABLE' ? 'PEAK TABLE' : 'XYPOINTS'
		const n = points.x.length
		if (n === 0) throw new SpectrumImportError('no-data', `the ##${table.name}= table holds no values`, table.line)
		x = points.x
		y = points.y
		for (let i = 0; i < n; i++) {
			x[i] = x[i]! * xFactor
			y[i] = y[i]! * yFactor
		}
		fileFirstX = x[0]!
		fileLastX = x[n - 1]!
		if (nPointsLabel !== null && n !== nPointsLabel) {
			throw new SpectrumImportError(
				'npoints',
				`##NPOINTS= ${nPointsLabel} but the ##${table.name}= table (lines ${table.firstLine}–${lastDataLine(text, table)}) holds ${n} points`,
				block.byKey.get('NPOINTS')!.line,
			)
		}
		const tol = n > 1 ? 0.5 * Math.abs((fileLastX - fileFirstX) / (n - 1)) : Math.abs(fileFirstX) * 1e-6
		if (table.kind === 'XYPOINTS' && firstXLabel !== null && Math.abs(firstXLabel - fileFirstX) > tol) {
			throw new SpectrumImportError(
				'firstx',
				`##FIRSTX= ${firstXLabel} does not match the first abscissa in the data, ${fileFirstX}`,
				block.byKey.get('FIRSTX')!.line,
			)
		}
		if (table.kind === 'XYPOINTS' && lastXLabel !== null && Math.abs(lastXLabel - fileLastX) > tol) {
			throw new SpectrumImportError(
				'lastx',
				`##LASTX= ${lastXLabel} does not match the last abscissa in the data, ${fileLastX}`,
				block.byKey.get('LASTX')!.line,
			)
		}
		if (table.kind === 'PEAKTABLE') {
			warnings.push({
				code: 'peak-table',
				message: 'the file holds a peak table (band positions and heights), not a continuous spectrum',
				line: table.line,
			})
		}
	}
	if (block.endLine === null) {
		warnings.push({
			code: 'missing-end',
			message: 'the block has no ##END= label; the data were complete, so it was read anyway',
		})
	}
	const finished = finishSpectrum({ x, y, xUnit, ordinate, sortable: table.kind === 'PEAKTABLE', dataLine: table.line })
	if (!finished.ok) return finished
	warnings.push(...finished.value.warnings)
	const labels: Record<string, string> = {}
	for (const ldr of block.ldrs) {
		if (!(ldr.name in labels)) labels[ldr.name] = ldr.value.trim()
	}
	return ok({
		spectrum: finished.value.spectrum,
		metadata: {
			title: title(block),
			xUnits: xUnitsText,
			yUnits: yUnitsText,
			ordinate: finished.value.ordinate,
			format: 'JCAMP-DX',
			jcampVersion: value(block, 'JCAMPDX') || null,
			firstX: fileFirstX,
			lastX: fileLastX,
			points: x.length,
			labels,
			dataForm,
		},
		warnings,
	})
}

function readUnits(block: Block): {
	xUnit: XUnitKind
	ordinate: DeclaredOrdinate
	xUnitsText: string
	yUnitsText: string
} {
	const xLdr = block.byKey.get('XUNITS')
	const yLdr = block.byKey.get('YUNITS')
	if (!xLdr || !yLdr) {
		const missing = [!xLdr && '##XUNITS=', !yLdr && '##YUNITS='].filter(Boolean).join(' and ')
		throw new SpectrumImportError(
			'units',
			`${missing} ${!xLdr && !yLdr ? 'are' : 'is'} missing, so the axes of the spectrum cannot be interpreted`,
			block.line,
		)
	}
	const xUnitsText = stripComment(xLdr.value)
	const yUnitsText = stripComment(yLdr.value)
	const xUnit = parseXUnits(xUnitsText)
	if (xUnit === null) {
		throw new SpectrumImportError(
			'units',
			`##XUNITS= ${xUnitsText} is not an infrared abscissa; 1/CM, MICROMETERS or NANOMETERS are read`,
			xLdr.line,
		)
	}
	const y = parseYUnits(yUnitsText)
	if (y === 'reflectance') {
		throw new SpectrumImportError(
			'units',
			`##YUNITS= ${yUnitsText}: reflectance spectra are not converted to absorbance (band intensities would not be comparable); export the spectrum as absorbance or transmittance`,
			yLdr.line,
		)
	}
	if (y === 'other') {
		throw new SpectrumImportError(
			'units',
			`##YUNITS= ${yUnitsText} is not read; ABSORBANCE or TRANSMITTANCE are`,
			yLdr.line,
		)
	}
	return { xUnit, ordinate: y, xUnitsText, yUnitsText }
}

type Decoded = {
	/** Ordinates as written (before YFACTOR). */
	y: Float64Array
	count: number
	/** Per data line: abscissa as written, index of the point it belongs to, line number. */
	lineX: Float64Array
	lineIndex: Int32Array
	lineNumber: Int32Array
	lines: number
	form: string
	/** Fewest decimal places any line abscissa was written with (0 for integers). */
	xDecimals: number
}

/**
 * Check FIRSTX, LASTX and each line's abscissa against the equally spaced grid the header defines; return the
 * grid ends (true units). Line abscissae are written rounded (to their last decimal times XFACTOR) and some writers let them
 * drift by most of a point spacing over a long file, so the per-line check looks for jumps between consecutive
 * lines: a missing or extra ordinate shifts every later line by one whole spacing at once.
 */
function checkAbscissae(
	block: Block,
	d: Decoded,
	xFactor: number,
	firstXLabel: number | null,
	lastXLabel: number | null,
): { firstX: number; lastX: number } {
	const n = d.count
	const k = d.lines - 1
	const dataFirstX = d.lineX[0]! * xFactor
	let lineStep = 0
	if (k > 0 && d.lineIndex[k]! > d.lineIndex[0]!) {
		lineStep = ((d.lineX[k]! - d.lineX[0]!) * xFactor) / (d.lineIndex[k]! - d.lineIndex[0]!)
	} else {
		const deltaX = numberLabel(block, 'DELTAX')
		if (deltaX !== null) lineStep = deltaX
		else if (firstXLabel !== null && lastXLabel !== null && n > 1) lineStep = (lastXLabel - firstXLabel) / (n - 1)
	}
	const firstX = firstXLabel ?? dataFirstX
	const headerStep =
		firstXLabel !== null && lastXLabel !== null && n > 1 ? (lastXLabel - firstXLabel) / (n - 1) : lineStep
	const dataLastX = d.lineX[k]! * xFactor + (n - 1 - d.lineIndex[k]!) * headerStep
	const lastX =
		lastXLabel ?? (firstXLabel === null ? dataLastX : d.lineX[k]! * xFactor + (n - 1 - d.lineIndex[k]!) * lineStep)
	const step = n > 1 ? (lastX - firstX) / (n - 1) : 0
	const spacing = Math.abs(step)
	// Line abscissae are rounded where they were written: to the last decimal place shown, times XFACTOR.
	const rounding = 0.5 * Math.abs(xFactor) * 10 ** -d.xDecimals
	const eps = 1e-9 * Math.max(Math.abs(firstX), Math.abs(lastX))
	if (Math.abs(firstX - dataFirstX) > 0.5 * spacing + rounding + eps) {
		throw new SpectrumImportError(
			'firstx',
			`##FIRSTX= ${firstX} does not match the first abscissa of the data, ${fmt(dataFirstX)} (line ${d.lineNumber[0]})`,
			block.byKey.get('FIRSTX')!.line,
		)
	}
	// Some writers let line abscissae drift by most of a spacing over a long file; the ends and every line may
	// deviate by up to two spacings before we call the header and the data inconsistent.
	const endTolerance = 2 * spacing + rounding + eps
	if (Math.abs(lastX - dataLastX) > endTolerance) {
		throw new SpectrumImportError(
			'lastx',
			`##LASTX= ${lastX} does not match the last abscissa of the data, ${fmt(dataLastX)} (line ${d.lineNumber[k]})`,
			block.byKey.get('LASTX')!.line,
		)
	}
	// Two neighbouring lines can be rounded in opposite directions, so their deviations may differ by 2 × rounding.
	// The jump test is only meaningful while that stays well below one spacing; otherwise NPOINTS must do.
	const jumpTolerance = 0.5 * spacing + 2 * rounding + eps
	const checkJumps = 2 * rounding <= 0.4 * spacing
	let previous = 0
	for (let i = 0; i < d.lines; i++) {
		const expected = firstX + d.lineIndex[i]! * step
		const deviation = d.lineX[i]! * xFactor - expected
		const jump = deviation - previous
		if (Math.abs(deviation) > endTolerance || (checkJumps && i > 0 && Math.abs(jump) > jumpTolerance)) {
			const off = spacing > 0 ? Math.abs(i > 0 ? jump : deviation) / spacing : 0
			throw new SpectrumImportError(
				'xcheck',
				`the abscissa ${fmt(d.lineX[i]! * xFactor)} is ${fmt(off)} point spacings away from where point ${d.lineIndex[i]! + 1} should be (${fmt(expected + previous)}); ` +
					`an ordinate is probably ${jump > 0 ? 'missing' : 'extra'} on ${i > 0 ? `line ${d.lineNumber[i - 1]}` : 'this line'}`,
				d.lineNumber[i],
			)
		}
		previous = deviation
	}
	return { firstX, lastX }
}

function checkFirstY(
	block: Block,
	firstY: number,
	y0: number,
	raw: Float64Array,
	yFactor: number,
	warnings: Array<ImportWarning>,
) {
	let maxAbs = 0
	for (let i = 0; i < raw.length; i++) {
		const a = Math.abs(raw[i]!)
		if (a > maxAbs) maxAbs = a
	}
	const tol = Math.max(
		Math.abs(yFactor),
		1e-4 * Math.max(Math.abs(firstY), Math.abs(y0)),
		1e-6 * maxAbs * Math.abs(yFactor),
	)
	if (Math.abs(firstY - y0) > tol) {
		const ratio = y0 !== 0 && firstY !== 0 ? ` (${fmt(((y0 - firstY) / firstY) * 100)} %)` : ''
		warnings.push({
			code: 'firsty',
			message: `##FIRSTY= ${firstY} differs from the first decoded ordinate, ${fmt(y0)}${ratio}; ##YFACTOR= may be wrong, so the ordinates may be scaled wrongly`,
			line: block.byKey.get('FIRSTY')!.line,
		})
	}
}

// ---------------------------------------------------------------------------------------------------------------
// Block structure

function scanBlocks(text: string, warnings: Array<ImportWarning>): Array<Block> {
	const roots: Array<Block> = []
	let current: Block | null = null
	let last: Ldr | null = null
	let pos = 0
	let line = 1
	let strayLine = 0
	let closedAll = false
	const len = text.length
	while (pos < len) {
		let eol = text.indexOf('\n', pos)
		if (eol < 0) eol = len
		let p = pos
		while (p < eol && (text.charCodeAt(p) === 32 || text.charCodeAt(p) === 9)) p++
		if (text.charCodeAt(p) === 35 && text.charCodeAt(p + 1) === 35) {
			const eq = text.indexOf('=', p + 2)
			if (eq < 0 || eq > eol) {
				if (current === null && closedAll) {
					if (strayLine === 0) strayLine = line
					pos = eol + 1
					line++
					continue
				}
				throw new SpectrumImportError(
					'bad-label',
					`"${clip(text.slice(p, eol))}" starts with ## but has no "=": it is not a labelled record`,
					line,
				)
			}
			const rawLabel = text.slice(p + 2, eq)
			const name = rawLabel.trim().toUpperCase().replace(/\s+/g, ' ')
			const key = normaliseLabel(rawLabel)
			const val = text.slice(eq + 1, eol)
			if (/##[^=\s]*=/.test(stripComment(val))) {
				warnings.push({
					code: 'two-labels-on-line',
					message: `two labelled records share one line ("${clip(text.slice(p, eol))}"); the second was not read as a label`,
					line,
				})
			}
			if (key === 'TITLE') {
				const block: Block = {
					ldrs: [],
					byKey: new Map(),
					children: [],
					parent: null,
					line,
					endLine: null,
					tables: [],
					hasNtuples: false,
					repeats: [],
				}
				while (current !== null && !isLink(current)) {
					warnings.push({
						code: 'missing-end',
						message: `the block that starts on line ${current.line} has no ##END=`,
						line,
					})
					current = current.parent
				}
				if (current !== null) {
					block.parent = current
					current.children.push(block)
				} else {
					roots.push(block)
				}
				current = block
				closedAll = false
			} else if (current === null) {
				if (key === 'END') {
					pos = eol + 1
					line++
					continue
				}
				if (closedAll) {
					if (strayLine === 0) strayLine = line
					pos = eol + 1
					line++
					continue
				}
				// Records before any ##TITLE=: read them into an untitled block rather than refuse the file.
				warnings.push({ code: 'no-title', message: 'the file does not start with ##TITLE=', line })
				current = {
					ldrs: [],
					byKey: new Map(),
					children: [],
					parent: null,
					line,
					endLine: null,
					tables: [],
					hasNtuples: false,
					repeats: [],
				}
				roots.push(current)
			}
			if (key === 'END') {
				current.endLine = line
				current = current.parent
				if (current === null) closedAll = true
				last = null
				pos = eol + 1
				line++
				continue
			}
			const ldr: Ldr = { key, name, value: val, line }
			if (key === 'NTUPLES') current.hasNtuples = true
			const tableKind = TABLE_KEYS[key]
			if (tableKind !== undefined) {
				// Data lines run until the next line that starts with ## (after optional blanks).
				const start = eol + 1
				let next = start
				let nextLine = line + 1
				let scan = start
				for (;;) {
					const hash = text.indexOf('##', scan)
					if (hash < 0) {
						next = len
						break
					}
					let ls = hash
					while (ls > start && (text.charCodeAt(ls - 1) === 32 || text.charCodeAt(ls - 1) === 9)) ls--
					if (ls === start || text.charCodeAt(ls - 1) === 10) {
						next = ls
						break
					}
					scan = hash + 2
				}
				for (let q = text.indexOf('\n', start); q >= 0 && q < next; q = text.indexOf('\n', q + 1)) nextLine++
				current.tables.push({
					kind: tableKind,
					name,
					variables: stripComment(val),
					line,
					start: Math.min(start, len),
					end: next,
					firstLine: line + 1,
					nextLine,
				})
				last = null
				pos = next
				line = nextLine
				continue
			}
			const existing = current.byKey.get(key)
			if (existing) current.repeats.push({ first: existing, again: ldr })
			else current.byKey.set(key, ldr)
			current.ldrs.push(ldr)
			last = ldr
		} else if (last !== null) {
			last.value += '\n' + text.slice(pos, eol)
		} else if (
			p < eol &&
			!(text.charCodeAt(p) === 36 && text.charCodeAt(p + 1) === 36) &&
			text.slice(p, eol).trim() !== '\x1a'
		) {
			// (0x1A is the old DOS end-of-file mark that some writers append.)
			if (strayLine === 0) strayLine = line
		}
		pos = eol + 1
		line++
	}
	if (strayLine !== 0) {
		warnings.push({ code: 'stray-text', message: 'text outside any labelled record was ignored', line: strayLine })
	}
	return roots
}

/** Last non-blank line of a table, for messages only (costs a pass over the table). */
function lastDataLine(text: string, table: Table): number {
	let line = table.firstLine
	let lastLine = table.firstLine - 1
	let pos = table.start
	while (pos < table.end) {
		let eol = text.indexOf('\n', pos)
		if (eol < 0 || eol > table.end) eol = table.end
		if (text.slice(pos, eol).trim() !== '') lastLine = line
		pos = eol + 1
		line++
	}
	return lastLine
}

/** JCAMP-DX label matching ignores case, blanks, hyphens, slashes and underscores (JCAMP-DX 5.01, Lampen et al. 1999). */
function normaliseLabel(raw: string): string {
	return raw.toUpperCase().replace(/[\s\-/_]/g, '')
}

function stripComment(v: string): string {
	const i = v.indexOf('$$')
	return (i < 0 ? v : v.slice(0, i)).trim()
}

function compact(v: string): string {
	return v.replace(/\s+/g, '').toUpperCase()
}

function clip(s: string): string {
	const t = s.trim().replace(/\s+/g, ' ')
	return t.length > 60 ? `${t.slice(0, 57)}…` : t
}

function fmt(v: number): string {
	return String(Math.round(v * 10000) / 10000)
}

function value(block: Block, key: string): string {
	const ldr = block.byKey.get(key)
	return ldr ? stripComment(ldr.value.split('\n')[0]!) : ''
}

function title(block: Block): string | null {
	const t = value(block, 'TITLE')
	return t === '' ? null : t
}

function isLink(block: Block): boolean {
	return value(block, 'DATATYPE').toUpperCase() === 'LINK' || block.byKey.has('BLOCKS')
}

function isInfrared(block: Block): boolean {
	const type = value(block, 'DATATYPE').toUpperCase()
	if (type === '') {
		const xu = block.byKey.get('XUNITS')
		return xu !== undefined && parseXUnits(stripComment(xu.value)) !== null
	}
	return type.includes('INFRARED') && !type.includes('INTERFEROGRAM')
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/

function numberLabel(block: Block, key: string): number | null {
	const ldr = block.byKey.get(key)
	if (!ldr) return null
	const v = stripComment(ldr.value)
	if (!NUMBER.test(v)) {
		throw new SpectrumImportError('bad-number', `##${ldr.name}= "${clip(v)}" is not a number`, ldr.line)
	}
	return Number(v)
}

// ---------------------------------------------------------------------------------------------------------------
// ASDF decoding of (X++(Y..Y)) tables (McDonald & Wilks 1988, ASDF forms; Y-check in DIF form)

/** Scratch cursor for the number readers; module-level to avoid an allocation per token. */
const cursor = { pos: 0 }

function decodeXyData(text: string, table: Table, capacity: number, maxPoints: number): Decoded {
	let ys: Float64Array = new Float64Array(capacity + 16)
	let n = 0
	let lineCap = 256
	let lineX: Float64Array = new Float64Array(lineCap)
	let lineIndex: Int32Array = new Int32Array(lineCap)
	let lineNumber: Int32Array = new Int32Array(lineCap)
	let lines = 0
	let prevEndedDif = false
	let prevLast = 0
	let prevLine = 0
	let sawDif = false
	let sawDup = false
	let sawSqz = false
	let sawPac = false
	let xDecimals = Infinity
	let line = table.firstLine
	let pos = table.start
	const end = table.end
	while (pos < end) {
		let eol = text.indexOf('\n', pos)
		if (eol < 0 || eol > end) eol = end
		let p = pos
		let c = text.charCodeAt(p)
		while (p < eol && (c === 32 || c === 9)) c = text.charCodeAt(++p)
		if (p >= eol || (c === 36 && text.charCodeAt(p + 1) === 36)) {
			pos = eol + 1
			line++
			continue
		}
		// Abscissa: AFFN (or SQZ, which some writers use for X too).
		let x: number
		if ((c >= 48 && c <= 57) || c === 43 || c === 45 || c === 46) {
			x = readAffn(text, p, eol)
		} else if (c === 64 || (c >= 65 && c <= 73) || (c >= 97 && c <= 105)) {
			x = readSqz(text, p, eol, c)
		} else {
			throw badCharacter(text, p, line, 'a data line must start with its abscissa')
		}
		if (Number.isNaN(x))
			throw new SpectrumImportError('bad-number', `"${clip(text.slice(p, eol))}" does not start with a number`, line)
		const places = decimalPlaces(text, p, cursor.pos)
		if (places < xDecimals) xDecimals = places
		p = cursor.pos
		const before = n
		let last = 0
		let kind = 0 // 0: nothing yet on this line, 1: absolute value, 2: difference
		let lastDif = 0
		let afterDup = false
		let first = true
		let checked = false
		while (p < eol) {
			c = text.charCodeAt(p)
			if (c === 32 || c === 9 || c === 44) {
				p++
				continue
			}
			if (c === 36 && text.charCodeAt(p + 1) === 36) break
			if (
				(c >= 48 && c <= 57) ||
				c === 43 ||
				c === 45 ||
				c === 46 ||
				c === 64 ||
				(c >= 65 && c <= 73) ||
				(c >= 97 && c <= 105)
			) {
				let v: number
				if (c >= 48 && c <= 57) {
					v = readAffn(text, p, eol)
				} else if (c === 43 || c === 45 || c === 46) {
					// PAC: a sign written straight after the previous value, with no blank in between.
					if (c !== 46 && !sawPac) {
						const previous = text.charCodeAt(p - 1)
						sawPac = previous !== 32 && previous !== 9 && previous !== 44
					}
					v = readAffn(text, p, eol)
				} else {
					v = readSqz(text, p, eol, c)
					sawSqz = true
				}
				if (Number.isNaN(v)) throw badCharacter(text, p, line, 'a sign without digits')
				p = cursor.pos
				if (first) {
					first = false
					if (prevEndedDif) {
						// Y-check: the first ordinate of a line after a line in DIF form repeats that line's last ordinate.
						if (v !== prevLast && Math.abs(v - prevLast) > 1e-9 * Math.max(1, Math.abs(v), Math.abs(prevLast))) {
							throw new SpectrumImportError(
								'ycheck',
								`the DIF check value ${fmtRaw(v)} does not match the last ordinate of line ${prevLine} (${fmtRaw(prevLast)})`,
								line,
							)
						}
						checked = true
						last = v
						kind = 1
						afterDup = false
						continue
					}
				}
				if (n === ys.length) ys = grow(ys, n, maxPoints, line)
				ys[n++] = v
				last = v
				kind = 1
				afterDup = false
			} else if (c === 37 || (c >= 74 && c <= 82) || (c >= 106 && c <= 114)) {
				if (kind === 0) throw badCharacter(text, p, line, 'a DIF value needs an ordinate before it on the same line')
				const d = readDif(text, p, eol, c)
				p = cursor.pos
				sawDif = true
				last += d
				lastDif = d
				if (n === ys.length) ys = grow(ys, n, maxPoints, line)
				ys[n++] = last
				kind = 2
				afterDup = false
				first = false
			} else if ((c >= 83 && c <= 90) || c === 115) {
				if (kind === 0)
					throw new SpectrumImportError('dup', `a DUP count ("${text[p]}") has no value before it to repeat`, line)
				if (afterDup)
					throw new SpectrumImportError(
						'dup',
						`two DUP counts in a row ("…${clip(text.slice(Math.max(pos, p - 6), p + 1))}")`,
						line,
					)
				const count = readDup(text, p, eol, c)
				if (count < 1) throw new SpectrumImportError('dup', 'a DUP count of 0', line)
				p = cursor.pos
				sawDup = true
				if (n + count > maxPoints) throw tooMany(maxPoints, line)
				for (let r = 1; r < count; r++) {
					if (kind === 2) last += lastDif
					if (n === ys.length) ys = grow(ys, n, maxPoints, line)
					ys[n++] = last
				}
				afterDup = true
			} else {
				throw badCharacter(text, p, line, 'it is not part of any number form')
			}
		}
		if (!first) {
			if (lines === lineCap) {
				lineCap *= 2
				lineX = growF(lineX, lineCap)
				lineIndex = growI(lineIndex, lineCap)
				lineNumber = growI(lineNumber, lineCap)
			}
			lineX[lines] = x
			lineIndex[lines] = checked ? before - 1 : before
			lineNumber[lines] = line
			lines++
			prevEndedDif = kind === 2
			prevLast = last
			prevLine = line
		}
		pos = eol + 1
		line++
	}
	const form = sawDif ? (sawDup ? 'DIFDUP' : 'DIF') : sawSqz ? (sawDup ? 'SQZDUP' : 'SQZ') : sawPac ? 'PAC' : 'AFFN'
	return {
		y: ys,
		count: n,
		lineX,
		lineIndex,
		lineNumber,
		lines,
		form,
		xDecimals: Number.isFinite(xDecimals) ? xDecimals : 0,
	}
}

/** Decimal places of an AFFN token (negative for E+nn exponents): how finely a line abscissa was written. */
function decimalPlaces(text: string, start: number, end: number): number {
	const token = text.slice(start, end)
	const e = token.search(/[eE]/)
	const mantissa = e < 0 ? token : token.slice(0, e)
	const exponent = e < 0 ? 0 : Number(token.slice(e + 1))
	const point = mantissa.indexOf('.')
	return (point < 0 ? 0 : mantissa.length - point - 1) - exponent
}

/** AFFN number at p (optional sign, digits, point, E±nn exponent). Sets cursor.pos; NaN when no digits. */
function readAffn(text: string, p: number, eol: number): number {
	const start = p
	let c = text.charCodeAt(p)
	let sign = 1
	if (c === 43 || c === 45) {
		if (c === 45) sign = -1
		c = text.charCodeAt(++p)
	}
	let m = 0
	let digits = 0
	while (p < eol && c >= 48 && c <= 57) {
		m = m * 10 + (c - 48)
		digits++
		c = text.charCodeAt(++p)
	}
	let simple = true
	if (p < eol && c === 46) {
		simple = false
		c = text.charCodeAt(++p)
		while (p < eol && c >= 48 && c <= 57) {
			digits++
			c = text.charCodeAt(++p)
		}
	}
	if (digits === 0) {
		cursor.pos = p
		return Number.NaN
	}
	if (p < eol && (c === 69 || c === 101) && isExponent(text, p, eol)) {
		simple = false
		p += 2
		c = text.charCodeAt(p)
		while (p < eol && c >= 48 && c <= 57) c = text.charCodeAt(++p)
	}
	cursor.pos = p
	if (simple && digits <= 15) return sign * m
	return Number(text.slice(start, p))
}

/** An E or e followed by a sign and a digit is an exponent; otherwise it is the SQZ digit ±5. */
function isExponent(text: string, p: number, eol: number): boolean {
	const s = text.charCodeAt(p + 1)
	const d = text.charCodeAt(p + 2)
	return p + 2 < eol && (s === 43 || s === 45) && d >= 48 && d <= 57
}

/** SQZ value: '@' = 0, 'A'–'I' = +1…+9, 'a'–'i' = −1…−9 as the leading digit, then digits. */
function readSqz(text: string, p: number, eol: number, c: number): number {
	const lead = c === 64 ? 0 : c <= 73 ? c - 64 : c - 96
	const sign = c >= 97 ? -1 : 1
	return readTail(text, p, eol, lead, sign)
}

/** DIF value: '%' = 0, 'J'–'R' = +1…+9, 'j'–'r' = −1…−9 as the leading digit, then digits. */
function readDif(text: string, p: number, eol: number, c: number): number {
	const lead = c === 37 ? 0 : c <= 82 ? c - 73 : c - 105
	const sign = c >= 106 ? -1 : 1
	return readTail(text, p, eol, lead, sign)
}

/** DUP count: 'S'–'Z' = 1…8, 's' = 9 as the leading digit, then digits; the total number of occurrences. */
function readDup(text: string, p: number, eol: number, c: number): number {
	const lead = c === 115 ? 9 : c - 82
	let m = lead
	let q = p + 1
	let d = text.charCodeAt(q)
	while (q < eol && d >= 48 && d <= 57) {
		m = m * 10 + (d - 48)
		d = text.charCodeAt(++q)
	}
	cursor.pos = q
	return m
}

function readTail(text: string, p: number, eol: number, lead: number, sign: number): number {
	let m = lead
	let q = p + 1
	let digits = 1
	let d = text.charCodeAt(q)
	while (q < eol && d >= 48 && d <= 57) {
		m = m * 10 + (d - 48)
		digits++
		d = text.charCodeAt(++q)
	}
	if ((q < eol && d === 46) || digits > 15 || (q < eol && (d === 69 || d === 101) && isExponent(text, q, eol))) {
		if (q < eol && d === 46) {
			d = text.charCodeAt(++q)
			while (q < eol && d >= 48 && d <= 57) d = text.charCodeAt(++q)
		}
		if (q < eol && (d === 69 || d === 101) && isExponent(text, q, eol)) {
			q += 2
			d = text.charCodeAt(q)
			while (q < eol && d >= 48 && d <= 57) d = text.charCodeAt(++q)
		}
		cursor.pos = q
		return Number(`${sign < 0 ? '-' : ''}${lead}${text.slice(p + 1, q)}`)
	}
	cursor.pos = q
	return sign * m
}

function grow(a: Float64Array, n: number, maxPoints: number, line: number): Float64Array {
	if (n >= maxPoints) throw tooMany(maxPoints, line)
	const b = new Float64Array(Math.min(maxPoints, Math.max(16, a.length * 2)))
	b.set(a.subarray(0, n))
	return b
}

function growF(a: Float64Array, size: number): Float64Array {
	const b = new Float64Array(size)
	b.set(a)
	return b
}

function growI(a: Int32Array, size: number): Int32Array {
	const b = new Int32Array(size)
	b.set(a)
	return b
}

function tooMany(maxPoints: number, line: number): SpectrumImportError {
	return new SpectrumImportError('too-large', `the data expand to more than ${maxPoints} points`, line)
}

function badCharacter(text: string, p: number, line: number, why: string): SpectrumImportError {
	let col = 1
	for (let q = p - 1; q >= 0 && text.charCodeAt(q) !== 10; q--) col++
	const ch = text[p] ?? ''
	const shown = /[\x21-\x7e]/.test(ch) ? `"${ch}"` : `U+${ch.charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}`
	return new SpectrumImportError(
		'bad-character',
		`unexpected character ${shown} in column ${col} of the data (${why})`,
		line,
	)
}

function fmtRaw(v: number): string {
	return String(v)
}

// ---------------------------------------------------------------------------------------------------------------
// (XY..XY) tables: XYPOINTS and PEAK TABLE

function decodePoints(text: string, table: Table, maxPoints: number): { x: Float64Array; y: Float64Array } {
	const vars = compact(table.variables)
	const group = /^\(XY\.\.XY\)$/.test(vars) ? 2 : /^\(XY[A-Z]\.\.XY[A-Z]\)$/.test(vars) ? 3 : 0
	if (group === 0) {
		throw new SpectrumImportError(
			'unsupported',
			`##${table.name}= ${table.variables} is not supported; (XY..XY) tables are read`,
			table.line,
		)
	}
	const xs: Array<number> = []
	const ys: Array<number> = []
	let pending: Array<number> = []
	let pendingLine = table.firstLine
	let line = table.firstLine
	let pos = table.start
	while (pos < table.end) {
		let eol = text.indexOf('\n', pos)
		if (eol < 0 || eol > table.end) eol = table.end
		let content = text.slice(pos, eol)
		const comment = content.indexOf('$$')
		if (comment >= 0) content = content.slice(0, comment)
		for (const tok of content.split(/[\s,;]+/)) {
			if (tok === '') continue
			if (pending.length === 0) pendingLine = line
			if (tok === '?') throw new SpectrumImportError('nan', 'a missing value ("?") in the data', line)
			if (!NUMBER.test(tok)) {
				throw new SpectrumImportError('bad-number', `"${clip(tok)}" is not a number`, line)
			}
			pending.push(Number(tok))
			if (pending.length === group) {
				xs.push(pending[0]!)
				ys.push(pending[1]!)
				pending = []
				if (xs.length > maxPoints) throw tooMany(maxPoints, line)
			}
		}
		pos = eol + 1
		line++
	}
	if (pending.length > 0) {
		throw new SpectrumImportError(
			'bad-number',
			`an incomplete group of ${pending.length} value${pending.length === 1 ? '' : 's'} at the end of the table`,
			pendingLine,
		)
	}
	return { x: Float64Array.from(xs), y: Float64Array.from(ys) }
}
