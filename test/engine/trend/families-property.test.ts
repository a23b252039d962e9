import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { EngineInputError } from '../../../src/engine/errors.js'
import { intermittentModels } from '../../../src/engine/intermittent/index.js'
import { seasonalModels } from '../../../src/engine/seasonal/index.js'
import { trendModels } from '../../../src/engine/trend/index.js'
import type { ModelFit } from '../../../src/engine/types.js'

const specs = [...trendModels, ...seasonalModels, ...intermittentModels]

const value = fc.oneof(
  fc.constant(0),
  fc.integer({ min: 0, max: 50 }),
  fc.double({ min: -1e3, max: 1e3, noNaN: true }),
  fc.double({ min: 0, max: 1e-300, noNaN: true }),
  fc.double({ min: 1e290, max: 1.7e308, noNaN: true }),
)

describe('every trend, seasonal and intermittent model', () => {
  it('has a unique name, a non-negative complexity and a sensible minimum length', () => {
    expect(new Set(specs.map((s) => s.name)).size).toBe(11)
    for (const s of specs) {
      expect(s.complexity).toBeGreaterThanOrEqual(0)
      expect(s.minLength(4)).toBeGreaterThanOrEqual(1)
      if (s.seasonal) expect(s.minLength(12)).toBe(24)
    }
  })

  // Property: any finite input either fits with finite output or throws EngineInputError.
  it('never lets NaN or Infinity escape, whatever the finite input', () => {
    fc.assert(
      fc.property(
        fc.oneof(
          fc.array(value, { minLength: 0, maxLength: 40 }),
          // demand-like: non-negative counts, often zero, long enough for seasonal models
          fc.array(fc.oneof(fc.constant(0), fc.integer({ min: 0, max: 30 })), { minLength: 8, maxLength: 60 }),
        ),
        fc.constantFrom(1, 2, 4, 12),
        (series, seasonLength) => {
          for (const spec of specs) {
            let fit: ModelFit
            try {
              fit = spec.fit(series, { seasonLength })
            } catch (err) {
              expect(err, spec.name).toBeInstanceOf(EngineInputError)
              continue
            }
            expect(fit.model).toBe(spec.name)
            expect(fit.fitted).toHaveLength(series.length)
            for (const v of fit.fitted) expect(Number.isNaN(v) || Number.isFinite(v), `${spec.name} fitted ${v}`).toBe(true)
            let forecast: number[]
            try {
              forecast = fit.forecast(12)
            } catch (err) {
              expect(err, spec.name).toBeInstanceOf(EngineInputError)
              continue
            }
            for (const v of forecast) expect(Number.isFinite(v), `${spec.name} forecast ${v}`).toBe(true)
            for (const v of fit.forecastVariance?.(12) ?? []) expect(Number.isFinite(v)).toBe(true)
          }
        },
      ),
      { numRuns: 300 },
    )
  })
})
