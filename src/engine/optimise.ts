/**
 * Bounded Nelder-Mead simplex minimiser (Nelder and Mead 1965, with the usual
 * coefficients: reflection 1, expansion 2, contraction 0.5, shrink 0.5).
 *
 * Bounds are honoured by clamping every trial point into [lower, upper].
 * Deterministic: fixed start simplex (start plus `step` along each axis, turned
 * back inwards when it would leave the box), no randomness, evaluation cap.
 * A non-finite objective value is treated as +Infinity.
 * Pure; allocates only at the start of a call (small plain arrays, which V8
 * creates faster than typed arrays), never per evaluation.
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
  const maxEval = options.maxEvaluations ?? 200
  const relTol = options.relTol ?? 1e-4
  const absTol = options.absTol ?? 1e-12
  const stepFraction = options.step ?? 0.1

  const clampInto = (x: number[]): void => {
    for (let j = 0; j < d; j++) {
      const v = x[j]
      x[j] = v >= lower[j] ? (v <= upper[j] ? v : upper[j]) : lower[j]
    }
  }
  let evaluations = 0
  const evaluate = (x: number[]): number => {
    evaluations++
    const v = objective(x)
    return Number.isFinite(v) ? v : Infinity
  }

  const pts: number[][] = []
  const vals: number[] = []
  for (let i = 0; i <= d; i++) {
    const p: number[] = []
    for (let j = 0; j < d; j++) p.push(start[j])
    clampInto(p)
    if (i > 0) {
      const j = i - 1
      const width = upper[j] - lower[j]
      const h = stepFraction * width
      p[j] = p[j] + h <= upper[j] ? p[j] + h : p[j] - h
      clampInto(p)
    }
    pts.push(p)
    vals.push(evaluate(p))
  }
  const order: number[] = []
  const centroid: number[] = []
  const xr: number[] = []
  const xe: number[] = []
  const xc: number[] = []
  for (let i = 0; i <= d; i++) order.push(i)
  for (let j = 0; j < d; j++) {
    centroid.push(0)
    xr.push(0)
    xe.push(0)
    xc.push(0)
  }
  const copy = (to: number[], from: readonly number[]): void => {
    for (let j = 0; j < d; j++) to[j] = from[j]
  }
  let converged = false

  const along = (out: number[], coef: number, worst: readonly number[]): void => {
    // out = centroid + coef * (centroid - worst)
    for (let j = 0; j < d; j++) out[j] = centroid[j] + coef * (centroid[j] - worst[j])
    clampInto(out)
  }

  for (;;) {
    // Insertion sort of vertex indices by value (d is tiny; ties keep index order).
    for (let i = 0; i <= d; i++) {
      let k = i
      while (k > 0 && vals[order[k - 1]] > vals[i]) {
        order[k] = order[k - 1]
        k--
      }
      order[k] = i
    }
    const best = order[0]
    const worst = order[d]
    const second = order[d - 1]
    const fb = vals[best]
    const fw = vals[worst]
    if (fw - fb <= relTol * Math.abs(fb) + absTol) {
      converged = true
      break
    }
    if (evaluations >= maxEval) break

    for (let j = 0; j < d; j++) centroid[j] = 0
    for (let i = 0; i <= d; i++) {
      if (i === worst) continue
      const p = pts[i]
      for (let j = 0; j < d; j++) centroid[j] += p[j]
    }
    for (let j = 0; j < d; j++) centroid[j] /= d

    const pw = pts[worst]
    along(xr, 1, pw)
    const fr = evaluate(xr)
    if (fr < fb) {
      along(xe, 2, pw)
      const fe = evaluate(xe)
      if (fe < fr) {
        copy(pw, xe)
        vals[worst] = fe
      } else {
        copy(pw, xr)
        vals[worst] = fr
      }
      continue
    }
    if (fr < vals[second]) {
      copy(pw, xr)
      vals[worst] = fr
      continue
    }
    // Contraction: outside if the reflection improved on the worst, else inside.
    const outside = fr < fw
    along(xc, outside ? 0.5 : -0.5, pw)
    const fc = evaluate(xc)
    if (fc < (outside ? fr : fw)) {
      copy(pw, xc)
      vals[worst] = fc
      continue
    }
    // Shrink towards the best point.
    const pb = pts[best]
    for (let i = 0; i <= d; i++) {
      if (i === best) continue
      const p = pts[i]
      for (let j = 0; j < d; j++) p[j] = pb[j] + 0.5 * (p[j] - pb[j])
      vals[i] = evaluate(p)
    }
  }

  let bestIndex = 0
  for (let i = 1; i <= d; i++) if (vals[i] < vals[bestIndex]) bestIndex = i
  return { x: pts[bestIndex].slice(), value: vals[bestIndex], evaluations, converged }
}
