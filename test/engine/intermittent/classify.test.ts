import { describe, expect, it } from 'vitest'
import { ADI_CUTOFF, CV2_CUTOFF, classifyDemand } from '../../../src/engine/intermittent/index.js'
import { expectEngineError } from '../trend/spec-checks.js'

// Cut-offs ADI 1.32 and CV^2 0.49: Syntetos, Boylan and Croston (2005), J. Oper. Res. Soc. 56(5).
describe('classifyDemand', () => {
  it('uses the published cut-offs', () => {
    expect(ADI_CUTOFF).toBe(1.32)
    expect(CV2_CUTOFF).toBe(0.49)
  })

  it('rejects empty, negative, non-finite and fewer than 2 demands', () => {
    expectEngineError(() => classifyDemand([]), 'empty-series')
    expectEngineError(() => classifyDemand([1, -1]), 'negative-value')
    expectEngineError(() => classifyDemand([1, NaN]), 'non-finite-value')
    expectEngineError(() => classifyDemand([0, 0, 0]), 'series-too-short')
    expectEngineError(() => classifyDemand([0, 3, 0]), 'series-too-short')
  })

  // Hand computation: demands 4, 6, 2 at positions 2, 5, 7: ADI = 7 / 3; mean 4,
  // population variance (0 + 4 + 4) / 3 = 8/3, CV^2 = (8/3) / 16 = 1/6.
  it('intermittent: long intervals, steady sizes', () => {
    const c = classifyDemand([0, 4, 0, 0, 6, 0, 2, 0])
    expect(c.adi).toBeCloseTo(7 / 3, 14)
    expect(c.cv2).toBeCloseTo(1 / 6, 14)
    expect(c.demands).toBe(3)
    expect(c.demandClass).toBe('intermittent')
  })

  // Demand every period, sizes 5 and 6: ADI 1; mean 5.5, variance 0.25, CV^2 = 0.25 / 30.25.
  it('smooth: every period, steady sizes', () => {
    const c = classifyDemand([5, 6, 5, 6, 5, 6])
    expect(c.adi).toBe(1)
    expect(c.cv2).toBeCloseTo(0.25 / 30.25, 14)
    expect(c.demandClass).toBe('smooth')
  })

  // Sizes 1 and 10: mean 5.5, variance 20.25, CV^2 = 20.25 / 30.25 = 0.669.
  it('erratic: every period, variable sizes', () => {
    const c = classifyDemand([1, 10, 1, 10, 1, 10])
    expect(c.cv2).toBeCloseTo(20.25 / 30.25, 14)
    expect(c.demandClass).toBe('erratic')
  })

  // Demands 1, 20, 1 at positions 3, 6, 9: ADI 3; mean 22/3, variance 722/9, CV^2 = 722/484 = 1.49.
  it('lumpy: long intervals, variable sizes', () => {
    const c = classifyDemand([0, 0, 1, 0, 0, 20, 0, 0, 1, 0])
    expect(c.adi).toBe(3)
    expect(c.cv2).toBeCloseTo(722 / 484, 14)
    expect(c.demandClass).toBe('lumpy')
  })

  // 25 demands with the last at position 33: ADI = 33/25 = 1.32 exactly, on the smooth side.
  it('puts a value exactly on the cut-off on the smooth side', () => {
    const s = new Array(33).fill(4)
    for (let i = 0; i < 8; i++) s[i] = 0
    const c = classifyDemand(s)
    expect(c.demands).toBe(25)
    expect(c.adi).toBe(1.32)
    expect(c.demandClass).toBe('smooth')
  })
})
