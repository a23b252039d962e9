import { describe, expect, it } from 'vitest'
import { StoredValueError } from '../../../src/storage/decode.js'
import { decodeSummaryRecord, summaryTail } from '../../../src/storage/skus/summary-record.js'

describe('summary record', () => {
  it('reads back what it wrote', () => {
    const summary = { model: 'croston' as const, warnings: ['no-intervals', 'short-history'], failed: false, error: { measure: 'mase' as const, value: 1.25 } }
    const tail = summaryTail(summary)
    expect(tail).toBe('croston|0|mase|1.25|no-intervals,short-history')
    expect(decodeSummaryRecord('GRD-1001', `1767225600000|run-1|${tail}`)).toEqual({ createdAtMs: 1767225600000, runId: 'run-1', summary })
    const failed = { model: null, warnings: [], failed: true, error: null }
    expect(decodeSummaryRecord('GRD-1001', `5|run-2|${summaryTail(failed)}`).summary).toEqual(failed)
  })

  it('refuses a record of another shape, naming the SKU', () => {
    for (const bad of ['', '5|run-1|croston|0|mase|1.25', '5|run 1|croston|0|||', '5|run-1|no-such-model|0|||', '5|run-1||2|||', '5|run-1||0|mase||', 'x|run-1||0|||']) {
      expect(() => decodeSummaryRecord('WRK-3001', bad)).toThrow(StoredValueError)
    }
    expect(() => decodeSummaryRecord('WRK-3001', '5|run-1||0|||A,b')).toThrow(/WRK-3001/)
  })
})
