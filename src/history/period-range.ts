import { formatPeriod, type Frequency } from '../engine/index.js'

/**
 * Label of the last period of a history of `count` periods from `startOrdinal`,
 * or why it cannot be stored: period labels stop at year 9999, and a stored
 * history whose end has no label could be written but never read back.
 */
export function lastPeriodOf(startOrdinal: number, count: number, frequency: Frequency): { label: string } | { reason: string } {
  try {
    return { label: formatPeriod(startOrdinal + count - 1, frequency) }
  } catch {
    return { reason: `the history would end after year 9999 (${count} ${frequency} periods from ${formatPeriod(startOrdinal, frequency)})` }
  }
}
