import type { ResultItem } from './contract.js'
import { OPEN_PERIODS_FITTED } from './failures.js'

/**
 * The item with a warning when its history was fitted with open periods
 * (after the tenant's closed-through period): their demand may still grow, so
 * the fit may read a partial period as a drop.
 */
export function withOpenPeriodsWarning(item: ResultItem, openPeriods: number | undefined): ResultItem {
  if (openPeriods === undefined || 'failure' in item) return item
  const message = `the fit includes ${openPeriods} open period(s) after the closed-through period; their demand may be incomplete`
  return { ...item, warnings: [...item.warnings, { code: OPEN_PERIODS_FITTED, message }] }
}
