import { METRIC_NAMES, MODEL_NAMES, type MetricName, type ModelName } from '../../engine/index.js'
import { WARNING_CODE_PATTERN, type SkuSummary } from '../../runs/sku-summary.js'
import { StoredValueError } from '../decode.js'
import { isValidRunId } from '../keys.js'

/**
 * A SKU's summary record: the field value of the tenant's summary hash
 * (sku-summary-store.ts), compact because there is one per SKU.
 *
 *   `${createdAtMs}|${runId}|${model}|${failed}|${measure}|${error}|${warnings}`
 *
 * model '' for a failed item; failed '1' or '0'; measure and error '' when the
 * item has no holdout error; warnings comma-separated codes ('' for none). The
 * first two fields order runs as the latest-forecast record does (the Lua script
 * in sku-summary-store.ts compares them: newest createdAt wins, ties go to the
 * larger run id), and the script reads the other fields to move the SKU between
 * index sets, so the field order is shared with it.
 */
export interface SummaryRecord {
  readonly createdAtMs: number
  readonly runId: string
  readonly summary: SkuSummary
}

/** The part of the record after createdAtMs and runId, made when an item is prepared (prepared-item.ts). */
export function summaryTail(s: SkuSummary): string {
  const error = s.error === null ? '|' : `${s.error.measure}|${String(s.error.value)}`
  return `${s.model ?? ''}|${s.failed ? '1' : '0'}|${error}|${s.warnings.join(',')}`
}

const isModel = (s: string): s is ModelName => (MODEL_NAMES as readonly string[]).includes(s)
const isMetric = (s: string): s is MetricName => (METRIC_NAMES as readonly string[]).includes(s)

/**
 * A stored record.
 * @throws StoredValueError naming the SKU when it does not have the shape above.
 */
export function decodeSummaryRecord(sku: string, value: string): SummaryRecord {
  const f = value.split('|')
  const bad = (why: string) => new StoredValueError(`summary of SKU ${sku} does not decode: ${why}`)
  if (f.length !== 7) throw bad(`${f.length} fields, not 7`)
  const [created, runId, model, failed, measure, error, warnings] = f as [string, string, string, string, string, string, string]
  const createdAtMs = Number(created)
  if (created === '' || !Number.isSafeInteger(createdAtMs)) throw bad(`createdAtMs ${JSON.stringify(created)}`)
  if (!isValidRunId(runId)) throw bad(`run id ${JSON.stringify(runId)}`)
  if (model !== '' && !isModel(model)) throw bad(`model ${JSON.stringify(model)}`)
  if (failed !== '0' && failed !== '1') throw bad(`failed ${JSON.stringify(failed)}`)
  const codes = warnings === '' ? [] : warnings.split(',')
  if (!codes.every((c) => WARNING_CODE_PATTERN.test(c))) throw bad(`warnings ${JSON.stringify(warnings)}`)
  let err: SkuSummary['error'] = null
  if (measure !== '' || error !== '') {
    const v = Number(error)
    if (!isMetric(measure) || error === '' || !Number.isFinite(v)) throw bad(`error ${JSON.stringify(`${measure}|${error}`)}`)
    err = { measure, value: v }
  }
  return { createdAtMs, runId, summary: { model: model === '' ? null : model, warnings: codes, failed: failed === '1', error: err } }
}
