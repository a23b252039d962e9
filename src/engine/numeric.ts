/** Small numeric helpers shared by the engine. Pure. */

/** Neumaier-compensated sum: accurate for long sums of mixed magnitude. */
export function sum(values: ArrayLike<number>, from = 0, to = values.length): number {
  let s = 0
  let c = 0
  for (let i = from; i < to; i++) {
    const v = values[i]!
    const t = s + v
    if (Math.abs(s) >= Math.abs(v)) c += s - t + v
    else c += v - t + s
    s = t
  }
  return s + c
}

export function mean(values: ArrayLike<number>, from = 0, to = values.length): number {
  const n = to - from
  return n > 0 ? sum(values, from, to) / n : NaN
}

/** |a - b| <= relTol * max(|a|, |b|), or both within absTol of each other. */
export function approxEqual(a: number, b: number, relTol: number, absTol = 0): boolean {
  if (a === b) return true
  if (!Number.isFinite(a) || !Number.isFinite(b)) return false
  const diff = Math.abs(a - b)
  return diff <= absTol || diff <= relTol * Math.max(Math.abs(a), Math.abs(b))
}

/** Clamp into [lo, hi]; NaN maps to lo. */
export function clamp(x: number, lo: number, hi: number): number {
  if (!(x >= lo)) return lo
  return x > hi ? hi : x
}

export function isConstant(values: ArrayLike<number>): boolean {
  for (let i = 1; i < values.length; i++) if (values[i] !== values[0]) return false
  return true
}
