import { MAX_TAGS, TAG_PATTERN } from './types.js'

/**
 * Validate and normalise tags: each must match TAG_PATTERN; duplicates are
 * dropped and the list sorted so stored tags compare equal.
 * @returns the tags, or a reason they are refused
 */
export function normaliseTags(tags: readonly unknown[]): { tags: string[] } | { reason: string } {
  if (tags.length > MAX_TAGS) return { reason: `at most ${MAX_TAGS} tags per SKU (got ${tags.length})` }
  const out = new Set<string>()
  for (const tag of tags) {
    if (typeof tag !== 'string' || !TAG_PATTERN.test(tag)) {
      return {
        reason: `tag ${JSON.stringify(tag)} must be 1-64 characters of letters, digits and . _ : / = -, starting with a letter or digit`,
      }
    }
    out.add(tag)
  }
  return { tags: [...out].sort() }
}
