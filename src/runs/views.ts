import type { ResultItem } from './contract.js'

/** A result item for `?view=compact`: every field but `candidates`. */
export function compactItem(item: ResultItem): ResultItem | Omit<ResultItem, 'candidates'> {
  if ('failure' in item) return item
  const { candidates: _candidates, ...rest } = item
  return rest
}
