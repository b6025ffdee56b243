import { useState } from 'react'
import { inputClass } from '#app/components/forms.tsx'
import { cn } from '#app/utils/misc.ts'
import { describeMappingProblem, mapFilesToContainers } from '#shared/runs/container-mapping.ts'

/**
 * The sample files of a run: one per container. Shows, as the analyst chooses files, which container each file
 * goes to (guessed from its name, changeable per file) and what is still missing. The server decides again with
 * the same rule (shared/runs/container-mapping.ts); without JavaScript it uses the names alone.
 */
export function ContainerFilesField({ containerCount }: { containerCount: number | null }) {
	const [names, setNames] = useState<Array<string>>([])
	const [overrides, setOverrides] = useState<Record<number, number>>({})
	const count = containerCount && containerCount > 0 ? containerCount : null
	const mapping = count ? mapFilesToContainers(names, count, overrides) : null
	return (
		<fieldset className="space-y-3">
			<legend className="text-ink mb-1 block text-sm font-medium">Sample spectra, one per container</legend>
			<p className="text-ink-faint text-xs">
				Name each file with its container number (for example <code>L2411-C03.jdx</code> or <code>container 3.csv</code>
				); you can correct any guess below before recording.
			</p>
			<input
				id="sample-files"
				type="file"
				name="files"
				multiple
				required
				aria-label="Sample spectra, one per container"
				accept=".jdx,.dx,.jcamp,.csv,.tsv,.txt,.xy,.prn"
				onChange={(event) => {
					setNames(Array.from(event.currentTarget.files ?? []).map((file) => file.name))
					setOverrides({})
				}}
				className="text-sm"
			/>
			{names.length && mapping ? (
				<div className="space-y-2">
					<table className="w-full max-w-2xl text-sm" data-testid="container-mapping">
						<caption className="sr-only">Which container each file belongs to</caption>
						<thead>
							<tr className="border-rule border-b text-left">
								<th scope="col" className="py-1 font-semibold">
									File
								</th>
								<th scope="col" className="py-1 font-semibold">
									Container
								</th>
							</tr>
						</thead>
						<tbody>
							{mapping.assignments.map((assignment) => (
								<tr
									key={`${assignment.fileIndex}-${assignment.fileName}`}
									className="border-rule border-b last:border-0"
								>
									<td className="py-1 pr-4">{assignment.fileName}</td>
									<td className="py-1">
										<select
											name={`container-${assignment.fileIndex}`}
											aria-label={`Container of ${assignment.fileName}`}
											value={assignment.container ?? ''}
											onChange={(event) => {
												const value = Number(event.currentTarget.value)
												setOverrides((current) => ({ ...current, [assignment.fileIndex]: value }))
											}}
											className={cn(inputClass, 'w-40 py-1')}
										>
											<option value="">Choose…</option>
											{Array.from({ length: count! }, (_, index) => index + 1).map((container) => (
												<option key={container} value={container}>
													Container {container}
												</option>
											))}
										</select>
									</td>
								</tr>
							))}
						</tbody>
					</table>
					{mapping.complete ? (
						<p className="text-good text-sm font-medium" role="status">
							Every container from 1 to {count} has exactly one file.
						</p>
					) : (
						<ul className="text-danger list-disc pl-5 text-sm" role="status" data-testid="mapping-problems">
							{mapping.problems.map((problem) => (
								<li key={describeMappingProblem(problem)}>{describeMappingProblem(problem)}</li>
							))}
						</ul>
					)}
				</div>
			) : names.length ? (
				<p className="text-ink-soft text-sm">Give the number of containers to see which file goes where.</p>
			) : null}
		</fieldset>
	)
}
