import { describe, expect, it } from 'vitest'
import { createServiceMetrics } from '../../src/http/metrics.js'

describe('service metrics', () => {
  it('expose the workers\' fit totals as source="worker" beside this process\'s sync fits', async () => {
    const m = createServiceMetrics()
    m.seriesFitted.inc({ source: 'sync', outcome: 'ok' })
    m.fitDuration.observe({ source: 'sync' }, 0.003)
    // Cumulative buckets as RunStats.fits() returns them: 2 fits <= 0.005 s, 1 more <= 0.05 s, 1 more above 2.5 s.
    m.setWorkerFits({ ok: 3, error: 1, buckets: [0, 2, 2, 2, 3, 3, 3, 3, 3, 3, 4], sum: 3.25, count: 4 })
    const text = await m.registry.metrics()
    expect(text).toContain('# TYPE almanac_series_fitted_total counter')
    expect(text).toContain('almanac_series_fitted_total{source="sync",outcome="ok"} 1')
    expect(text).toContain('almanac_series_fitted_total{source="worker",outcome="ok"} 3')
    expect(text).toContain('almanac_series_fitted_total{source="worker",outcome="error"} 1')
    expect(text).toContain('# TYPE almanac_fit_duration_seconds histogram')
    expect(text).toContain('almanac_fit_duration_seconds_bucket{le="0.005",source="sync"} 1')
    expect(text).toContain('almanac_fit_duration_seconds_count{source="sync"} 1')
    const worker = text.split('\n').filter((l) => l.startsWith('almanac_fit_duration_seconds') && l.includes('source="worker"'))
    expect(worker).toEqual([
      'almanac_fit_duration_seconds_bucket{le="0.001",source="worker"} 0',
      'almanac_fit_duration_seconds_bucket{le="0.005",source="worker"} 2',
      'almanac_fit_duration_seconds_bucket{le="0.01",source="worker"} 2',
      'almanac_fit_duration_seconds_bucket{le="0.025",source="worker"} 2',
      'almanac_fit_duration_seconds_bucket{le="0.05",source="worker"} 3',
      'almanac_fit_duration_seconds_bucket{le="0.1",source="worker"} 3',
      'almanac_fit_duration_seconds_bucket{le="0.25",source="worker"} 3',
      'almanac_fit_duration_seconds_bucket{le="0.5",source="worker"} 3',
      'almanac_fit_duration_seconds_bucket{le="1",source="worker"} 3',
      'almanac_fit_duration_seconds_bucket{le="2.5",source="worker"} 3',
      'almanac_fit_duration_seconds_bucket{le="+Inf",source="worker"} 4',
      'almanac_fit_duration_seconds_sum{source="worker"} 3.25',
      'almanac_fit_duration_seconds_count{source="worker"} 4',
    ])
    // One HELP/TYPE header per family: the worker series join the family, not a second one.
    expect(text.match(/# TYPE almanac_fit_duration_seconds /g)).toHaveLength(1)
  })

  it('leave the worker series out until a scrape has read them', async () => {
    const text = await createServiceMetrics().registry.metrics()
    expect(text).toContain('# TYPE almanac_series_fitted_total counter')
    expect(text).not.toContain('source="worker"')
  })
})
