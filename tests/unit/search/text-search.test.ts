import { expect, test } from 'vitest'
import { containsPattern, SEARCH_TEXT_MAX, SearchTextSchema } from '#shared/search/text-search.ts'

// PostgreSQL documentation, 9.7.1 "LIKE": "_" matches any single character, "%" any run of characters; "to match a
// literal underscore or percent sign ... the respective character in pattern must be preceded by the escape
// character. The default escape character is the backslash ... To match the escape character itself, write two
// escape characters." The integration test library-search.test.ts runs these patterns against PostgreSQL itself.
test('[LIB-001] the search text is matched literally: % _ and \\ are escaped with a backslash', () => {
	expect(containsPattern('acid')).toBe('%acid%')
	expect(containsPattern('50%')).toBe('%50\\%%')
	expect(containsPattern('LOT_7')).toBe('%LOT\\_7%')
	expect(containsPattern('A\\B')).toBe('%A\\\\B%')
	expect(containsPattern('%_\\')).toBe('%\\%\\_\\\\%')
})

test('[LIB-002] ?q= is trimmed, its inner whitespace collapsed and its length capped; empty or absent is no search', () => {
	expect(SearchTextSchema.parse('  acetyl   salicylic \t')).toBe('acetyl salicylic')
	expect(SearchTextSchema.parse('')).toBeUndefined()
	expect(SearchTextSchema.parse('   ')).toBeUndefined()
	expect(SearchTextSchema.parse(undefined)).toBeUndefined()
	expect(SearchTextSchema.parse(['a', 'b'])).toBeUndefined()
	expect(SearchTextSchema.parse('x'.repeat(SEARCH_TEXT_MAX + 50))).toHaveLength(SEARCH_TEXT_MAX)
})
