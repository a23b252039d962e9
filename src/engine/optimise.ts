/**
 * Bounded Nelder-Mead simplex minimiser (Nelder and Mead 1965, with the usual
 * coefficients: reflection 1, expansion 2, contraction 0.5, shrink 0.5).
 *
 * Bounds are honoured by clamping every trial point into [lower, upper].
 * Deterministic: fixed start simplex (start plus `step` along each axis, turned
 * back inwards when it would leave the box), no randomness, evaluation cap.
 * A non-finite objective value is treated as +Infinity.
 * Pure in effect; working arrays are reused across calls (see `pool`), so a call
 * allocates only its result.
 */

export interface NelderMeadOptions {
  /** Objective evaluations allowed (default 200). */
  readonly maxEvaluations?: number
  /** Stop when f(worst) - f(best) <= relTol * |f(best)| + absTol (defaults 1e-4, 1e-12). */
  readonly relTol?: number
  readonly absTol?: number
  /** Start-simplex edge as a fraction of each box width (default 0.1). */
  readonly step?: number
}

export interface NelderMeadResult {
  readonly x: number[]
  readonly value: number
  readonly evaluations: number
  readonly converged: boolean
}

/** Per-dimension working arrays of one call (plain arrays: V8 reads them as fast as typed ones). */
interface Workspace {
  readonly pts: number[][]
  readonly vals: number[]
  readonly order: number[]
  readonly centroid: number[]
  readonly xr: number[]
  readonly xe: number[]
  readonly xc: number[]
  busy: boolean
}

function zeros(d: number): number[] {
  const a: number[] = []
  for (let j = 0; j < d; j++) a.push(0)
  return a
}

/**
 * Workspaces reused across calls, by dimension (fits call this thousands of times a
 * second; fresh arrays and closures per call were a measurable share of the garbage).
 * A nested call (an objective that minimises) gets a workspace of its own.
 */
const pool: Workspace[][] = []

function acquire(d: number): Workspace {
  const free = (pool[d] ??= [])
  for (const w of free) {
    if (!w.busy) {
      w.busy = true
      return w
    }
  }
  const pts: number[][] = []
  for (let i = 0; i <= d; i++) pts.push(zeros(d))
  const w: Workspace = { pts, vals: zeros(d + 1), order: zeros(d + 1), centroid: zeros(d), xr: zeros(d), xe: zeros(d), xc: zeros(d), busy: true }
  free.push(w)
  return w
}

function clampInto(x: number[], lower: ArrayLike<number>, upper: ArrayLike<number>, d: number): void {
  for (let j = 0; j < d; j++) {
    const v = x[j]!
    x[j] = v >= lower[j]! ? (v <= upper[j]! ? v : upper[j]!) : lower[j]!
  }
}

/** out = centroid + coef * (centroid - worst), clamped into the box. */
function along(out: number[], centroid: readonly number[], coef: number, worst: readonly number[], lower: ArrayLike<number>, upper: ArrayLike<number>, d: number): void {
  for (let j = 0; j < d; j++) out[j] = centroid[j]! + coef * (centroid[j]! - worst[j]!)
  clampInto(out, lower, upper, d)
}

function copy(to: number[], from: readonly number[], d: number): void {
  for (let j = 0; j < d; j++) to[j] = from[j]!
}

/** A non-finite objective value counts as +Infinity. */
function finiteOrInfinity(v: number): number {
  return Number.isFinite(v) ? v : Infinity
}

/**
 * Minimise `objective` over the box [lower, upper].
 * The objective receives a scratch array it must not keep.
 */
export function minimiseNelderMead(
  objective: (x: readonly number[]) => number,
  start: ArrayLike<number>,
  lower: ArrayLike<number>,
  upper: ArrayLike<number>,
  options: NelderMeadOptions = {},
): NelderMeadResult {
  const d = start.length
  const w = acquire(d)
  try {
    return search(objective, start, lower, upper, options, d, w)
  } finally {
    w.busy = false
  }
}

function search(
  objective: (x: readonly number[]) => number,
  start: ArrayLike<number>,
  lower: ArrayLike<number>,
  upper: ArrayLike<number>,
  options: NelderMeadOptions,
  d: number,
  w: Workspace,
): NelderMeadResult {
  const maxEval = options.maxEvaluations ?? 200
  const relTol = options.relTol ?? 1e-4
  const absTol = options.absTol ?? 1e-12
  const stepFraction = options.step ?? 0.1
  const { pts, vals, order, centroid, xr, xe, xc } = w
  let evaluations = 0

  for (let i = 0; i <= d; i++) {
    const p = pts[i]!
    for (let j = 0; j < d; j++) p[j] = start[j]!
    clampInto(p, lower, upper, d)
    if (i > 0) {
      const j = i - 1
      const width = upper[j]! - lower[j]!
      const h = stepFraction * width
      p[j] = p[j]! + h <= upper[j]! ? p[j]! + h : p[j]! - h
      clampInto(p, lower, upper, d)
    }
    evaluations++
    vals[i] = finiteOrInfinity(objective(p))
  }
  let converged = false

  for (;;) {
    // Insertion sort of vertex indices by value (d is tiny; ties keep index order).
    for (let i = 0; i <= d; i++) {
      let k = i
      while (k > 0 && vals[order[k - 1]!]! > vals[i]!) {
        order[k] = order[k - 1]!
        k--
      }
      order[k] = i
    }
    const best = order[0]!
    const worst = order[d]!
    const second = order[d - 1]!
    const fb = vals[best]!
    const fw = vals[worst]!
    if (fw - fb <= relTol * Math.abs(fb) + absTol) {
      converged = true
      break
    }
    if (evaluations >= maxEval) break

    for (let j = 0; j < d; j++) centroid[j] = 0
    for (let i = 0; i <= d; i++) {
      if (i === worst) continue
      const p = pts[i]!
      for (let j = 0; j < d; j++) centroid[j]! += p[j]!
    }
    for (let j = 0; j < d; j++) centroid[j]! /= d

    const pw = pts[worst]!
    along(xr, centroid, 1, pw, lower, upper, d)
    evaluations++
    const fr = finiteOrInfinity(objective(xr))
    if (fr < fb) {
      along(xe, centroid, 2, pw, lower, upper, d)
      evaluations++
      const fe = finiteOrInfinity(objective(xe))
      if (fe < fr) {
        copy(pw, xe, d)
        vals[worst] = fe
      } else {
        copy(pw, xr, d)
        vals[worst] = fr
      }
      continue
    }
    if (fr < vals[second]!) {
      copy(pw, xr, d)
      vals[worst] = fr
      continue
    }
    // Contraction: outside if the reflection improved on the worst, else inside.
    const outside = fr < fw
    along(xc, centroid, outside ? 0.5 : -0.5, pw, lower, upper, d)
    evaluations++
    const fc = finiteOrInfinity(objective(xc))
    if (fc < (outside ? fr : fw)) {
      copy(pw, xc, d)
      vals[worst] = fc
      continue
    }
    // Shrink towards the best point.
    const pb = pts[best]!
    for (let i = 0; i <= d; i++) {
      if (i === best) continue
      const p = pts[i]!
      for (let j = 0; j < d; j++) p[j] = pb[j]! + 0.5 * (p[j]! - pb[j]!)
      evaluations++
      vals[i] = finiteOrInfinity(objective(p))
    }
  }

  let bestIndex = 0
  for (let i = 1; i <= d; i++) if (vals[i]! < vals[bestIndex]!) bestIndex = i
  return { x: pts[bestIndex]!.slice(), value: vals[bestIndex]!, evaluations, converged }
}
