/**
 * Significant-digit rounding of the numbers in stored result items
 * (item-served.ts) and latest-forecast records (latest-record.ts), and the
 * replenishment fields kept exactly.
 */
export const POWERS_OF_TEN = Array.from({ length: 23 }, (_, i) => 10 ** i)
/** 10^-i as the nearest doubles, i = 0..6. */
const NEGATIVE_POWERS = Array.from({ length: 7 }, (_, i) => 10 ** -i)

/**
 * Math.floor(Math.log10(a)) for a finite a > 0, the same value, mostly without the
 * logarithm (a large share of writing a served item; bench/RESULTS.md, "Figures
 * behind choices in the code"): for 1e-6 <= a < 1e15 the decade
 * is found by comparison, and the logarithm is still taken when a lies within 1e-12
 * (relative) of a power of ten, where the rounded logarithm could fall on either side.
 * Elsewhere log10, whose error is below one ulp, cannot cross an integer, so both agree.
 */
export function decade(a: number): number {
  let k: number
  if (a >= 1) {
    if (!(a < 1e15)) return Math.floor(Math.log10(a))
    k = 0
    while (a >= POWERS_OF_TEN[k + 1]!) k++
    if (a < POWERS_OF_TEN[k]! * (1 + 1e-12) || a > POWERS_OF_TEN[k + 1]! * (1 - 1e-12)) return Math.floor(Math.log10(a))
    return k
  }
  if (!(a >= 1e-6)) return Math.floor(Math.log10(a))
  k = 1
  while (a < NEGATIVE_POWERS[k]!) k++
  // NEGATIVE_POWERS[k] <= a < NEGATIVE_POWERS[k - 1], nearest doubles of 10^-k and 10^-(k-1)
  if (a < NEGATIVE_POWERS[k]! * (1 + 1e-12) || a > NEGATIVE_POWERS[k - 1]! * (1 - 1e-12)) return Math.floor(Math.log10(a))
  return -k
}

/**
 * x to `digits` significant digits: the same values as Number(x.toPrecision(digits)),
 * without toPrecision's string round trip (each stored item rounds a few hundred
 * numbers). Powers of ten up to 1e22 are exact doubles, so the scaled value is
 * rounded once; when it lands exactly on .5, the binary value decides, so
 * toPrecision (which rounds the exact binary value) answers.
 */
export function round(x: number, digits: number): number {
  if (!Number.isFinite(x) || x === 0) return x
  const a = Math.abs(x)
  const p = digits - 1 - decade(a)
  let r = NaN
  if (p >= 0 && p <= 22) {
    const s = a * POWERS_OF_TEN[p]!
    if (s - Math.floor(s) !== 0.5) r = Math.round(s) / POWERS_OF_TEN[p]!
  } else if (p < 0 && p >= -22) {
    const s = a / POWERS_OF_TEN[-p]!
    if (s - Math.floor(s) !== 0.5) r = Math.round(s) * POWERS_OF_TEN[-p]!
  }
  if (Number.isNaN(r)) r = Number(a.toPrecision(digits))
  return x < 0 ? -r : r
}
export const r7 = (x: number) => round(x, 7)
export const r4 = (x: number) => round(x, 4)

export const REPLENISHMENT_FIELDS = [
  'leadTimePeriods',
  'reviewPeriods',
  'leadTimeSdPeriods',
  'serviceLevel',
  'minimumOrder',
  'packSize',
  'leadTimeDemand',
  'coverDemand',
  'sigma',
  'z',
  'safetyStock',
  'reorderPoint',
  'orderQuantity',
] as const

/** The fields of each `replenishment.periods` entry after its `period`. */
export const REPLENISHMENT_PERIOD_FIELDS = ['coverDemand', 'sigma', 'safetyStock', 'reorderPoint'] as const

/** Options, z and the whole-unit figures kept exactly; demands and sigma to 7 significant digits like forecasts. */
export const EXACT = new Set<string>([
  'leadTimePeriods',
  'reviewPeriods',
  'leadTimeSdPeriods',
  'serviceLevel',
  'minimumOrder',
  'packSize',
  'z',
  'safetyStock',
  'reorderPoint',
  'orderQuantity',
])

/** A value as JSON.stringify writes it inside an array: undefined, NaN and Infinity as null. */
export function jv(v: unknown): string {
  if (typeof v === 'number') return v - v === 0 ? '' + v : 'null'
  const s = JSON.stringify(v)
  return s === undefined ? 'null' : s
}
