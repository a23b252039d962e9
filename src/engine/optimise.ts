/**
 * Bounded Nelder-Mead simplex minimiser (Nelder and Mead 1965, with the usual
 * coefficients: reflection 1, expansion 2, contraction 0.5, shrink 0.5).
 *
 * Bounds are honoured by clamping every trial point into [lower, upper].
 * Deterministic: fixed start simplex (start plus `step` along each axis, turned
 * back inwards when it would leave the box), no randomness, evaluation cap.
 * A non-finite objective value is treated as +Infinity.
 * Pure; allocates only at the start of a call, never per evaluation.
 */

export interface NelderMeadOptions {
  /** Objective evaluations allowed (default 200). */
  readonly maxEvaluations?: number
  /** Stop when f(worst) - f(best) <= relTol * |f(best)| + absTol (defaults 1e-5, 1e-12). */
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
 * The objective receives a scratch Float64Array it must not keep.
 */
export function minimiseNelderMead(
  objective: (x: Float64Array) => number,
  start: ArrayLike<number>,
  lower: ArrayLike<number>,
  upper: ArrayLike<number>,
  options: NelderMeadOptions = {},
): NelderMeadResult {
  const d = start.length
  const maxEval = options.maxEvaluations ?? 200
  const relTol = options.relTol ?? 1e-5
  const absTol = options.absTol ?? 1e-12
  const stepFraction = options.step ?? 0.1

  const clampInto = (x: Float64Array): void => {
    for (let j = 0; j < d; j++) {
      const v = x[j]
      x[j] = v >= lower[j] ? (v <= upper[j] ? v : upper[j]) : lower[j]
    }
  }
  let evaluations = 0
  const evaluate = (x: Float64Array): number => {
    evaluations++
    const v = objective(x)
    return Number.isFinite(v) ? v : Infinity
  }

  const pts: Float64Array[] = []
  const vals = new Float64Array(d + 1)
  for (let i = 0; i <= d; i++) {
    const p = Float64Array.from(start)
    clampInto(p)
    if (i > 0) {
      const j = i - 1
      const width = upper[j] - lower[j]
      const h = stepFraction * width
      p[j] = p[j] + h <= upper[j] ? p[j] + h : p[j] - h
      clampInto(p)
    }
    pts.push(p)
    vals[i] = evaluate(p)
  }
  const order = new Int32Array(d + 1)
  const centroid = new Float64Array(d)
  const xr = new Float64Array(d)
  const xe = new Float64Array(d)
  const xc = new Float64Array(d)
  let converged = false

  const along = (out: Float64Array, coef: number, worst: Float64Array): void => {
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

    centroid.fill(0)
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
        pw.set(xe)
        vals[worst] = fe
      } else {
        pw.set(xr)
        vals[worst] = fr
      }
      continue
    }
    if (fr < vals[second]) {
      pw.set(xr)
      vals[worst] = fr
      continue
    }
    // Contraction: outside if the reflection improved on the worst, else inside.
    const outside = fr < fw
    along(xc, outside ? 0.5 : -0.5, pw)
    const fc = evaluate(xc)
    if (fc < (outside ? fr : fw)) {
      pw.set(xc)
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
  return { x: Array.from(pts[bestIndex]), value: vals[bestIndex], evaluations, converged }
}
