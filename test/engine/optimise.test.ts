import { describe, expect, it } from 'vitest'
import { minimiseNelderMead } from '../../src/engine/optimise.js'

// Rosenbrock's function (Rosenbrock 1960), minimum 0 at (1, 1): the standard hard case
// for simplex methods (Nelder and Mead 1965 used it too).
const rosenbrock = (x: readonly number[]): number => 100 * (x[1]! - x[0]! ** 2) ** 2 + (1 - x[0]!) ** 2

describe('minimiseNelderMead', () => {
  it('finds the Rosenbrock minimum from (-1.2, 1) inside a box', () => {
    const r = minimiseNelderMead(rosenbrock, [-1.2, 1], [-2, -2], [2, 2], { maxEvaluations: 2000, relTol: 1e-12, absTol: 1e-14 })
    expect(r.converged).toBe(true)
    expect(Math.abs(r.x[0]! - 1)).toBeLessThan(1e-3)
    expect(Math.abs(r.x[1]! - 1)).toBeLessThan(2e-3)
    expect(r.value).toBeLessThan(1e-6)
  })

  // Hand-checkable: (x - 3)^2 + (y + 1)^2 on [0, 1] x [0, 1] has its box minimum at (1, 0).
  it('stops on the bound when the minimum lies outside the box', () => {
    const f = (x: readonly number[]) => (x[0]! - 3) ** 2 + (x[1]! + 1) ** 2
    const r = minimiseNelderMead(f, [0.5, 0.5], [0, 0], [1, 1], { maxEvaluations: 500 })
    expect(r.x[0]).toBeCloseTo(1, 6)
    expect(r.x[1]).toBeCloseTo(0, 6)
    for (const v of r.x) expect(v >= 0 && v <= 1).toBe(true)
  })

  it('treats NaN and Infinity as +Infinity and never returns them when a finite point exists', () => {
    const f = (x: readonly number[]) => (x[0]! > 0.6 ? NaN : x[0]! < 0.2 ? Infinity : (x[0]! - 0.5) ** 2)
    const r = minimiseNelderMead(f, [0.3], [0], [1], { maxEvaluations: 200 })
    expect(Number.isFinite(r.value)).toBe(true)
    expect(r.x[0]).toBeCloseTo(0.5, 3)
  })

  it('respects the evaluation cap and is deterministic', () => {
    const a = minimiseNelderMead(rosenbrock, [-1.2, 1], [-2, -2], [2, 2], { maxEvaluations: 30 })
    const b = minimiseNelderMead(rosenbrock, [-1.2, 1], [-2, -2], [2, 2], { maxEvaluations: 30 })
    expect(a.converged).toBe(false)
    // One iteration may use up to d + 1 = 3 evaluations (a shrink) after the check.
    expect(a.evaluations).toBeLessThanOrEqual(30 + 2)
    expect(a).toEqual(b)
  })

  it('converges at once on a constant objective', () => {
    const r = minimiseNelderMead(() => 0, [0.3, 0.1], [0, 0], [1, 1])
    expect(r.converged).toBe(true)
    expect(r.evaluations).toBe(3)
    expect(r.value).toBe(0)
  })
})
