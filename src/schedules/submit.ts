import type { RunRequest, SeriesItem } from '../schemas/run.js'
import type { HistoryStore } from '../storage/history-store.js'
import { RunInputError, type RunGateway } from '../storage/types.js'
import type { SubmitScheduled } from './fire.js'

/** Histories read per batch while collecting a selection. */
const BATCH = 1000

/**
 * Submits a scheduled run over stored histories: the selection's histories
 * become the run's series (with their own frequency and first period).
 * @throws RunInputError when the selection matches no stored history.
 */
export function submitFromHistories(histories: Pick<HistoryStore, 'select'>, gateway: Pick<RunGateway, 'submit'>): SubmitScheduled {
  return async (tenant, settings, selection) => {
    const series: SeriesItem[] = []
    for await (const batch of histories.select(tenant, selection, BATCH)) {
      for (const h of batch) series.push({ sku: h.sku, values: [...h.values], start: h.start, frequency: h.frequency })
    }
    if (series.length === 0) throw new RunInputError('invalid-option', 'the selection matches no stored history', 'selection')
    const request: RunRequest = { ...settings, series }
    return gateway.submit(tenant, request)
  }
}
