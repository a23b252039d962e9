const numbers = new Intl.NumberFormat('en', { maximumFractionDigits: 1 })
const precise = new Intl.NumberFormat('en', { maximumFractionDigits: 3 })

export function formatNumber(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '–'
  return numbers.format(value)
}

export function formatPrecise(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '–'
  return precise.format(value)
}

export function formatTime(iso: string | null | undefined): string {
  if (!iso) return '–'
  const d = new Date(iso)
  if (Number.isNaN(d.getTime())) return iso
  return d.toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short' })
}

/** Model ids are spelled out already (damped-trend-smoothing); shown with spaces. */
export function modelLabel(model: string): string {
  return model.replaceAll('-', ' ')
}
