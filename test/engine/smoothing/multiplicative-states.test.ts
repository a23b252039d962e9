import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { sseSeasonalMul } from '../../../src/engine/smoothing/kernels.js'
import { multiplicativeStates, multiplicativeWorkspace } from '../../../src/engine/smoothing/multiplicative-states.js'
import { runHoltWinters } from '../../../src/engine/smoothing/index.js'
import { smoothingFixture } from './fixture.js'

/** Runs `steps` Gauss-Newton steps from [level, trend, ...seasonal]; returns the error sum and the states. */
function refine(y: number[], p: { alpha: number; beta: number; gamma: number; phi: number }, start: number[], steps: number, hasTrend = true) {
  const out = Float64Array.from(start)
  const work = new Float64Array(multiplicativeWorkspace(start.length - 2))
  const sse = multiplicativeStates(Float64Array.from(y), p.alpha, p.beta, p.gamma, p.phi, hasTrend, steps, work, out)
  return { sse, level: out[0]!, trend: out[1]!, seasonal: Array.from(out.subarray(2)) }
}

const params = { alpha: 0.3, beta: 0.2, gamma: 0.1, phi: 1 }
const truth = { level: 80, trend: 1.2, seasonal: [1.25, 0.9, 0.7, 1.15] } // mean one

/** A noise-free path of the multiplicative recursion from `truth`. */
function path(n: number): number[] {
  const y: number[] = []
  let l = truth.level
  const b = truth.trend
  for (let t = 0; t < n; t++) {
    l += b
    y.push(l * truth.seasonal[t % 4]!)
  }
  return y
}

describe('multiplicativeStates', () => {
  it('leaves the states untouched when the start has no finite error sum', () => {
    const start = [-5, 0, 1, 1, 1, 1] // negative base
    const r = refine(path(16), params, start, 3)
    expect(r.sse).toBe(Infinity)
    expect([r.level, r.trend, ...r.seasonal]).toEqual(start)
  })

  // Hand-checkable: a noise-free path is matched with zero error by its own states, and
  // Gauss-Newton converges to them from a start off by a few percent.
  it('recovers the states of a noise-free multiplicative Holt-Winters path', () => {
    const y = path(24)
    const r = refine(y, params, [76, 0.8, 1.2, 0.95, 0.72, 1.13], 8)
    expect(approxEqual(r.level, truth.level, 1e-6)).toBe(true)
    expect(approxEqual(r.trend, truth.trend, 1e-5)).toBe(true)
    r.seasonal.forEach((v, j) => expect(approxEqual(v, truth.seasonal[j]!, 1e-6)).toBe(true))
    const run = runHoltWinters(y, { ...params, seasonLength: 4, seasonal: 'mul', initial: { level: r.level, trend: r.trend, seasonal: r.seasonal } })
    expect(run.sse).toBeLessThan(1e-6)
    expect(Math.abs(r.seasonal.reduce((a, b) => a + b, 0) - 4)).toBeLessThan(1e-12) // mean one kept
  })

  it('keeps the trend at zero for a model without trend', () => {
    const y = Array.from({ length: 16 }, (_, t) => 50 * truth.seasonal[t % 4]! * (1 + 0.02 * Math.sin(t)))
    const r = refine(y, { ...params, beta: 0 }, [45, 0, 1.1, 0.95, 0.8, 1.15], 3, false)
    expect(r.trend).toBe(0)
    expect(Number.isFinite(r.sse)).toBe(true)
  })

  // On real data (R `datasets` via the statsmodels 0.13.5 fixture, with its parameters and
  // start) a step is taken only when it lowers the error sum, so it never does worse.
  it('never does worse than the given states on fixture series', () => {
    const cases = smoothingFixture.recursions.filter((r) => r.seasonal === 'mul')
    expect(cases.length).toBeGreaterThan(0)
    for (const c of cases) {
      const y = Float64Array.from(c.series)
      const p = { alpha: c.alpha, beta: c.beta ?? 0, gamma: c.gamma!, phi: c.phi ?? 1 }
      // The fixture's seasonal start need not average one: rescale it into our convention.
      const mean = c.initial.seasonal!.reduce((a, b) => a + b, 0) / c.seasonLength!
      const level = c.initial.level * mean
      const trend = c.initial.trend! * mean
      const seasonal = c.initial.seasonal!.map((v) => v / mean)
      const scratch = new Float64Array(c.seasonLength!)
      const before = sseSeasonalMul(y, p.alpha, p.beta, p.gamma, p.phi, level, trend, Float64Array.from(seasonal), scratch)
      const r = refine(c.series, p, [level, trend, ...seasonal], 2)
      const after = sseSeasonalMul(y, p.alpha, p.beta, p.gamma, p.phi, r.level, r.trend, Float64Array.from(r.seasonal), scratch)
      expect(approxEqual(after, r.sse, 1e-9)).toBe(true)
      expect(after).toBeLessThanOrEqual(before)
    }
  })
})
