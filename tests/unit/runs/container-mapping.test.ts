import fc from 'fast-check'
import { describe, expect, test } from 'vitest'

import {
	containerFromFileName,
	describeMappingProblem,
	mapFilesToContainers,
	type MappingProblem,
} from '#shared/runs/container-mapping.ts'

// Sources:
// - EU GMP Annex 8, clause 2: a complete batch's identity needs a sample from every container and an identity test on
//   each (FACTS.md §2.6, READ-2°). Hence: a mapping is complete only when every container has exactly one spectrum.
// - How analysts name files ('<lot>-C03.jdx', 'container 7.csv', 'drum 4'): common practice, no source.
const ANNEX_8 = 'EU GMP Annex 8 cl. 2 (FACTS.md §2.6, READ-2°)'
const NAMING = 'file naming: common practice, no source'

describe(`container numbers read from file names — ${NAMING}`, () => {
	test.each([
		['L2411-C03.jdx', 3],
		['lot-2411-c03', 3],
		['container 7.csv', 7],
		['CONTAINER 05.JDX', 5],
		['Container_12.spc', 12],
		['sample_12.dx', 12],
		['Drum#4.spa', 4],
		['drum 004.jdx', 4],
		['bag_2_of_5.jdx', 2],
		['keg-10.dx', 10],
		['ct.9.csv', 9],
		['ABC-#12.jdx', 12],
		['12345-c4.jdx', 4],
		['L2411-C03-rep2.jdx', 3],
		['2026-11-05_3.jdx', 3],
	])('%s → container %i', (fileName, container) => {
		expect(containerFromFileName(fileName)).toBe(container)
	})

	test('a number introduced by a container word wins over numbers after it (lot first, then the repeat)', () => {
		// Without the label the last number would be taken ('rep2' → 2).
		expect(containerFromFileName('L2411-C03-rep2.jdx')).toBe(3)
		expect(containerFromFileName('L2411-03-rep2.jdx')).toBe(2)
	})

	test.each([
		['no-number.jdx', 'no digits at all'],
		['C00.jdx', 'container 0 does not exist (containers count from 1)'],
		['C0.jdx', 'container 0 does not exist'],
		['reading.12', 'the only digits form the extension'],
		['c10000.jdx', 'five digits after the label are not a container number'],
		// Fixed here: the tail of a long digit run used to be read as a container ('QC240001' → 1, '12345' → 2345).
		['QC240001.jdx', 'a sample id is read whole, not by its last four digits'],
		['sample 12345.jdx', 'a five-digit number is read whole'],
	])('%s → none (%s)', (fileName) => {
		expect(containerFromFileName(fileName)).toBeNull()
	})

	test('a letter run ending in c is no container label (spec-3 is container 3 by the number alone)', () => {
		expect(containerFromFileName('spec-3.jdx')).toBe(3)
		expect(containerFromFileName('abc7-x9.jdx')).toBe(9)
	})
})

describe(`mapping files to the containers of a lot — ${ANNEX_8}`, () => {
	test('one well-named file per container is complete, with no problem', () => {
		const mapping = mapFilesToContainers(['L7-C02.jdx', 'L7-C01.jdx', 'L7-C03.jdx'], 3)
		expect(mapping.complete).toBe(true)
		expect(mapping.problems).toEqual([])
		expect(mapping.assignments).toEqual([
			{ fileIndex: 0, fileName: 'L7-C02.jdx', container: 2 },
			{ fileIndex: 1, fileName: 'L7-C01.jdx', container: 1 },
			{ fileIndex: 2, fileName: 'L7-C03.jdx', container: 3 },
		])
	})

	test('every problem kind is reported, in a stable order, and each has a sentence', () => {
		const mapping = mapFilesToContainers(['notes.jdx', 'L7-C09.jdx', 'L7-C02.jdx', 'L7-C02-again.jdx'], 4)
		expect(mapping.complete).toBe(false)
		expect(mapping.problems).toEqual<Array<MappingProblem>>([
			{ kind: 'unmapped-file', fileIndex: 0, fileName: 'notes.jdx' },
			{ kind: 'out-of-range', fileIndex: 1, fileName: 'L7-C09.jdx', container: 9 },
			{ kind: 'duplicate-container', container: 2, fileNames: ['L7-C02.jdx', 'L7-C02-again.jdx'] },
			{ kind: 'missing-container', container: 1 },
			{ kind: 'missing-container', container: 3 },
			{ kind: 'missing-container', container: 4 },
		])
		expect(mapping.problems.map(describeMappingProblem)).toEqual([
			'notes.jdx: no container number in the name; choose its container.',
			'L7-C09.jdx: container 9 is not in this lot.',
			'Container 2 has 2 files (L7-C02.jdx, L7-C02-again.jdx); keep one.',
			'Container 1 has no spectrum.',
			'Container 3 has no spectrum.',
			'Container 4 has no spectrum.',
		])
	})

	test('a file too many is never dropped silently: a five-file upload for four containers is refused', () => {
		const names = ['C1.jdx', 'C2.jdx', 'C3.jdx', 'C4.jdx', 'C5.jdx']
		const mapping = mapFilesToContainers(names, 4)
		expect(mapping.complete).toBe(false)
		expect(mapping.problems).toEqual([{ kind: 'out-of-range', fileIndex: 4, fileName: 'C5.jdx', container: 5 }])
	})

	test('no file at all leaves every container missing', () => {
		const mapping = mapFilesToContainers([], 2)
		expect(mapping.complete).toBe(false)
		expect(mapping.problems).toEqual([
			{ kind: 'missing-container', container: 1 },
			{ kind: 'missing-container', container: 2 },
		])
	})

	test("the analyst's override replaces the guess from the name, and can repair every problem", () => {
		const names = ['notes.jdx', 'L7-C09.jdx', 'L7-C02.jdx', 'L7-C02-again.jdx']
		const mapping = mapFilesToContainers(names, 4, { 0: 1, 1: 4, 3: 3 })
		expect(mapping.assignments.map((row) => row.container)).toEqual([1, 4, 2, 3])
		expect(mapping.problems).toEqual([])
		expect(mapping.complete).toBe(true)
	})

	test('an override is checked like a guess: out of range or 0 is a problem', () => {
		const mapping = mapFilesToContainers(['C1.jdx', 'C2.jdx'], 2, { 1: 0 })
		expect(mapping.problems).toEqual([
			{ kind: 'out-of-range', fileIndex: 1, fileName: 'C2.jdx', container: 0 },
			{ kind: 'missing-container', container: 2 },
		])
	})
})

/** Ways analysts name one container's file (common practice, no source); `lot` may itself contain digits. */
const PATTERNS: ReadonlyArray<(lot: string, container: number) => string> = [
	(lot, n) => `${lot}-C${String(n).padStart(2, '0')}.jdx`,
	(lot, n) => `${lot}_container_${n}.csv`,
	(_lot, n) => `container ${n}.csv`,
	(lot, n) => `${lot} drum ${String(n).padStart(3, '0')}.spa`,
	(_lot, n) => `sample_${n}.dx`,
	(lot, n) => `${lot}-c${n}-rep1.jdx`,
]

describe(`property: a shuffled set of well-named files maps each container once — ${ANNEX_8}; ${NAMING}`, () => {
	test('complete, no problem, and each file lands on the container its name was made for', () => {
		fc.assert(
			fc.property(
				fc.integer({ min: 1, max: 200 }),
				fc.integer({ min: 0, max: PATTERNS.length - 1 }),
				fc.stringMatching(/^L[0-9]{2,6}[A-Z]?$/),
				fc.infiniteStream(fc.nat()),
				(count, patternIndex, lot, randoms) => {
					const pattern = PATTERNS[patternIndex]!
					const made = Array.from({ length: count }, (_, i) => ({ container: i + 1, name: pattern(lot, i + 1) }))
					// Fisher–Yates with the generated numbers, so fast-check can shrink a failing order.
					const order = [...made]
					const stream = randoms[Symbol.iterator]()
					for (let i = order.length - 1; i > 0; i--) {
						const j = stream.next().value! % (i + 1)
						;[order[i], order[j]] = [order[j]!, order[i]!]
					}
					const mapping = mapFilesToContainers(
						order.map((file) => file.name),
						count,
					)
					expect(mapping.problems).toEqual([])
					expect(mapping.complete).toBe(true)
					expect(mapping.assignments.map((row) => row.container)).toEqual(order.map((file) => file.container))
					expect(new Set(mapping.assignments.map((row) => row.container)).size).toBe(count)
				},
			),
		)
	})

	test('dropping any one file of a complete set reports exactly that container as missing', () => {
		fc.assert(
			fc.property(fc.integer({ min: 1, max: 60 }), fc.nat(), (count, pick) => {
				const dropped = (pick % count) + 1
				const names = Array.from({ length: count }, (_, i) => `L1-C${i + 1}.jdx`).filter((_, i) => i + 1 !== dropped)
				const mapping = mapFilesToContainers(names, count)
				expect(mapping.complete).toBe(false)
				expect(mapping.problems).toEqual([{ kind: 'missing-container', container: dropped }])
			}),
		)
	})
})
