/**
 * The SKU list's filters as they sit in the page URL (/app/skus?model=theta&failed=true)
 * and in the GET /v1/skus query: the same names, so a filtered list can be linked
 * and the request read off the address bar.
 */
export interface SkuQuery {
  readonly prefix: string
  readonly tag: string
  readonly model: string
  readonly warning: string
  /** Lowest holdout error shown ('' for none), on errorMeasure. */
  readonly minError: string
  readonly errorMeasure: string
  readonly failed: boolean
  readonly exception: boolean
  /** '' (by SKU) or 'error' (largest holdout error first, on errorMeasure). */
  readonly sort: string
}

export const EMPTY_QUERY: SkuQuery = { prefix: '', tag: '', model: '', warning: '', minError: '', errorMeasure: 'mase', failed: false, exception: false, sort: '' }

/**
 * Model ids the service chooses from (the API's `model` enum). A test
 * (test/web/sku-filters.test.ts) keeps this list equal to the engine's.
 */
export const MODEL_OPTIONS = [
  'last-value',
  'last-value-drift',
  'last-season',
  'moving-average',
  'level-smoothing',
  'linear-trend',
  'trend-smoothing',
  'damped-trend-smoothing',
  'level-smoothing-season-averages',
  'linear-trend-season-averages',
  'linear-trend-season-ratios',
  'trend-smoothing-additive-season',
  'trend-smoothing-multiplicative-season',
  'damped-trend-smoothing-additive-season',
  'damped-trend-smoothing-multiplicative-season',
  'level-smoothing-additive-season',
  'level-smoothing-multiplicative-season',
  'croston',
  'croston-bias-corrected',
  'theta',
  'optimised-theta',
  'dynamic-optimised-theta',
  'state-space-smoothing',
  'median-combination',
  'auto-arima',
  'shortlist-combination',
] as const

/** Warning codes of docs/warnings.md (the same test keeps them in step). */
export const WARNING_OPTIONS = [
  'all-zero-series',
  'constant-series',
  'fallback-last-value',
  'fewer-than-two-seasons',
  'forecast-raised-to-zero',
  'holdout-reduced',
  'intermittent-demand',
  'intervals-raised-to-zero',
  'leading-zeros-trimmed',
  'missing-filled',
  'model-unavailable',
  'no-intervals',
  'open-periods-fitted',
  'peer-level-blended',
  'period-setting-converted',
  'period-setting-not-applied',
  'rank-by-undefined',
  'ranked-in-sample',
  'refit-failed',
  'replenishment-skipped',
  'short-history',
] as const

/** Holdout error measures (the API's `errorMeasure`), with the labels the page shows. */
export const MEASURE_OPTIONS = [
  ['mase', 'MASE'],
  ['mae', 'MAE'],
  ['rmse', 'RMSE'],
  ['mape', 'MAPE'],
  ['smape', 'sMAPE'],
  ['wape', 'WAPE'],
] as const

export function measureLabel(measure: string): string {
  return MEASURE_OPTIONS.find(([m]) => m === measure)?.[1] ?? measure
}

/** The filters of a URL query; unknown values are kept as typed (the API answers 400 for them). */
export function parseSkuQuery(query: URLSearchParams): SkuQuery {
  return {
    prefix: query.get('prefix') ?? '',
    tag: query.get('tag') ?? '',
    model: query.get('model') ?? '',
    warning: query.get('warning') ?? '',
    minError: query.get('minError') ?? '',
    errorMeasure: query.get('errorMeasure') ?? 'mase',
    failed: query.get('failed') === 'true',
    exception: query.get('exception') === 'true',
    sort: query.get('sort') === 'error' ? 'error' : '',
  }
}

/** The query string of the filters (empty ones left out), for the page URL and GET /v1/skus alike. */
export function skuQueryParams(q: Partial<SkuQuery>): URLSearchParams {
  const out = new URLSearchParams()
  const text = (name: keyof SkuQuery, value: string | undefined) => {
    const v = value?.trim()
    if (v) out.set(name, v)
  }
  text('prefix', q.prefix)
  text('tag', q.tag)
  text('model', q.model)
  text('warning', q.warning)
  text('minError', q.minError)
  const errorUsed = Boolean(q.minError?.trim()) || q.sort === 'error'
  if (errorUsed && q.errorMeasure && q.errorMeasure !== 'mase') out.set('errorMeasure', q.errorMeasure)
  if (q.failed) out.set('failed', 'true')
  if (q.exception) out.set('exception', 'true')
  if (q.sort === 'error') out.set('sort', 'error')
  return out
}

/** A stable key of the filters (paging restarts when it changes). */
export function skuQueryKey(q: SkuQuery): string {
  return skuQueryParams(q).toString()
}
