/**
 * Which container each uploaded sample file belongs to. Files are matched by the container number in their name
 * ('L2411-C03.jdx', 'container 7.csv', 'sample_12.dx'); the analyst may override any guess. The mapping is
 * complete only when every container from 1 to the lot's count has exactly one file and no file is left over.
 * Pure: used by the upload form (live preview) and by the server (the decision that counts).
 */

export type ContainerAssignment = { fileIndex: number; fileName: string; container: number | null }

export type MappingProblem =
	| { kind: 'unmapped-file'; fileIndex: number; fileName: string }
	| { kind: 'out-of-range'; fileIndex: number; fileName: string; container: number }
	| { kind: 'duplicate-container'; container: number; fileNames: Array<string> }
	| { kind: 'missing-container'; container: number }

export type ContainerMapping = {
	assignments: Array<ContainerAssignment>
	problems: Array<MappingProblem>
	/** True when every container 1…count has exactly one file and every file has a container. */
	complete: boolean
}

// A number introduced by a container word wins over any other number in the name ('lot-2411-c03' → 3).
const LABELLED = /(?:^|[^a-z])(?:c|ct|cnt|cont|container|drum|bag|keg|fass|#)[\s_\-.#]*0*(\d{1,4})(?!\d)/gi
// NOTE: a number is read whole: the tail of a longer digit run ('QC240001', a sample id) is no container number.
const ANY_NUMBER = /(?<!\d)(\d{1,4})(?!\d)/g

/** The container number a file name suggests, or null when it suggests none. */
export function containerFromFileName(fileName: string): number | null {
	const base = fileName.replace(/\.[a-z0-9]{1,6}$/i, '')
	const labelled = [...base.matchAll(LABELLED)]
	const last = labelled.at(-1) ?? [...base.matchAll(ANY_NUMBER)].at(-1)
	if (!last) return null
	const value = Number(last[1])
	return Number.isInteger(value) && value > 0 ? value : null
}

/**
 * Maps files to containers 1…containerCount. `overrides[fileIndex]` (a container number) replaces the guess from
 * the file name for that file.
 */
export function mapFilesToContainers(
	fileNames: ReadonlyArray<string>,
	containerCount: number,
	overrides: Readonly<Record<number, number>> = {},
): ContainerMapping {
	const assignments: Array<ContainerAssignment> = fileNames.map((fileName, fileIndex) => ({
		fileIndex,
		fileName,
		container: overrides[fileIndex] ?? containerFromFileName(fileName),
	}))
	const problems: Array<MappingProblem> = []
	const byContainer = new Map<number, Array<string>>()
	for (const assignment of assignments) {
		if (assignment.container === null) {
			problems.push({ kind: 'unmapped-file', fileIndex: assignment.fileIndex, fileName: assignment.fileName })
		} else if (assignment.container < 1 || assignment.container > containerCount) {
			problems.push({
				kind: 'out-of-range',
				fileIndex: assignment.fileIndex,
				fileName: assignment.fileName,
				container: assignment.container,
			})
		} else {
			byContainer.set(assignment.container, [...(byContainer.get(assignment.container) ?? []), assignment.fileName])
		}
	}
	for (const [container, names] of [...byContainer].sort((a, b) => a[0] - b[0])) {
		if (names.length > 1) problems.push({ kind: 'duplicate-container', container, fileNames: names })
	}
	for (let container = 1; container <= containerCount; container++) {
		if (!byContainer.has(container)) problems.push({ kind: 'missing-container', container })
	}
	return { assignments, problems, complete: problems.length === 0 }
}

/** One plain sentence per problem, for the form and for the server's refusal. */
export function describeMappingProblem(problem: MappingProblem): string {
	switch (problem.kind) {
		case 'unmapped-file':
			return `${problem.fileName}: no container number in the name; choose its container.`
		case 'out-of-range':
			return `${problem.fileName}: container ${problem.container} is not in this lot.`
		case 'duplicate-container':
			return `Container ${problem.container} has ${problem.fileNames.length} files (${problem.fileNames.join(', ')}); keep one.`
		case 'missing-container':
			return `Container ${problem.container} has no spectrum.`
	}
}

/** The analyst's corrections sent with a form: fields `container-<fileIndex>` → container number (zod-free: digits only). */
export function parseContainerOverrides(entries: Iterable<[string, unknown]>): Record<number, number> {
	const overrides: Record<number, number> = {}
	for (const [key, value] of entries) {
		const match = /^container-(\d{1,4})$/.exec(key)
		if (match && typeof value === 'string' && /^\d{1,4}$/.test(value)) overrides[Number(match[1])] = Number(value)
	}
	return overrides
}
