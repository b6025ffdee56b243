import { z } from 'zod'

/** The longest free-text search a list accepts; the search box says so with maxLength. */
export const SEARCH_TEXT_MAX = 100

/**
 * The free-text search of a list (`?q=`): trimmed, runs of whitespace collapsed to one space, cut to
 * SEARCH_TEXT_MAX characters; empty or malformed becomes "no search" rather than an error page, because a
 * shared or hand-edited link should still show the list.
 */
export const SearchTextSchema = z
	.string()
	.transform((text) => text.trim().replace(/\s+/g, ' ').slice(0, SEARCH_TEXT_MAX) || undefined)
	.optional()
	.catch(undefined)

/**
 * A LIKE/ILIKE pattern that matches `text` anywhere, literally: `%`, `_` and the escape character itself are
 * escaped with a backslash, PostgreSQL's default LIKE escape character, so "50%" finds "50%" and not "50…".
 */
export function containsPattern(text: string): string {
	return `%${text.replace(/[\\%_]/g, (special) => `\\${special}`)}%`
}
