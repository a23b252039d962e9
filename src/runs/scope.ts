import type { FieldError } from '../errors.js'

/** Most field errors listed for one scope; the message says how many there were. */
const MAX_LISTED = 100

/**
 * The SKUs of a `scope.skus` list that cannot run: a SKU named twice or without
 * a stored history, one field error each (`scope.skus[i]`), in list order, at
 * most 100. Runs and schedules check a scope with it when it is submitted;
 * SKUs deleted later are skipped when a schedule fires, and counted.
 * `missing` answers which of the SKUs given have no stored history.
 */
export async function scopeSkuErrors(
  skus: readonly string[],
  missing: (skus: readonly string[]) => Promise<readonly string[]>,
  path = 'scope.skus',
): Promise<{ errors: FieldError[]; summary: string } | null> {
  const errors: { index: number; error: FieldError }[] = []
  const seen = new Map<string, number>()
  skus.forEach((sku, i) => {
    const first = seen.get(sku)
    if (first !== undefined) errors.push({ index: i, error: { path: `${path}[${i}]`, message: `SKU ${JSON.stringify(sku)} is also ${path}[${first}]` } })
    else seen.set(sku, i)
  })
  const absent = new Set(await missing([...seen.keys()]))
  for (const [sku, i] of seen) if (absent.has(sku)) errors.push({ index: i, error: { path: `${path}[${i}]`, message: `no stored history for SKU ${JSON.stringify(sku)}` } })
  if (errors.length === 0) return null
  errors.sort((a, b) => a.index - b.index)
  const more = errors.length > MAX_LISTED ? `; the first ${MAX_LISTED} are listed` : ''
  return {
    errors: errors.slice(0, MAX_LISTED).map((e) => e.error),
    summary: `${absent.size} SKU(s) without a stored history, ${errors.length - absent.size} named twice${more}`,
  }
}
