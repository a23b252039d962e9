import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import {
  aiccOf,
  estimateForm,
  evaluateForm,
  fitStateSpaceSmoothing,
  forecastVariances,
  pointForecasts,
  simulatedVariances,
  varianceMethod,
  type StateSpaceForm,
} from '../../../src/engine/state-space/index.js'
import { stateSpaceModels } from '../../../src/engine/state-space/index.js'
import ref from '../fixtures/statsmodels_ets/ets.json' with { type: 'json' }
import { expectEngineError, expectSane } from '../trend/spec-checks.js'

interface Fixture {
  readonly error: string
  readonly trend: string | null
  readonly damped: boolean
  readonly season: string | null
}

const formOf = (f: Fixture): StateSpaceForm => ({
  error: f.error as 'add' | 'mul',
  trend: f.trend === null ? 'none' : f.damped ? 'damped' : 'add',
  season: (f.season ?? 'none') as 'none' | 'add' | 'mul',
})

const maxRelError = (a: readonly number[], b: readonly number[]): number => {
  expect(a).toHaveLength(b.length)
  let worst = 0
  a.forEach((v, i) => (worst = Math.max(worst, Math.abs(v - b[i]!) / Math.max(Math.abs(b[i]!), 1e-300))))
  return worst
}

describe('state-space-smoothing: special cases', () => {
  const spec = stateSpaceModels[0]!

  it('rejects empty, non-finite and too-short input and a bad season length', () => {
    expectEngineError(() => spec.fit([], { seasonLength: 1 }), 'empty-series')
    expectEngineError(() => spec.fit([1, 2, NaN, 4, 5, 6], { seasonLength: 1 }), 'non-finite-value')
    expectEngineError(() => spec.fit([1, 2, 3, 4], { seasonLength: 1 }), 'series-too-short', 'state-space-smoothing needs 5 periods, has 4')
    expectEngineError(() => fitStateSpaceSmoothing([1, 2, 3, 4, 5, 6], 0), 'invalid-option')
  })

  it('forecasts a constant series as itself with the fewest parameters', () => {
    const fit = fitStateSpaceSmoothing(new Array(30).fill(7), 12)
    const fc = expectSane(fit, 30)
    for (const v of fc) expect(approxEqual(v, 7, 1e-6)).toBe(true)
    expect(['A,N,N', 'M,N,N']).toContain(fit.form)
  })

  it('continues a noisy straight line with a trend form', () => {
    // Deterministic wiggle, not random: +-1 around 50 + 3t.
    const line = Array.from({ length: 30 }, (_, t) => 50 + 3 * t + (t % 2 === 0 ? 1 : -1))
    const fit = fitStateSpaceSmoothing(line, 1)
    expect(fit.form).toMatch(/^[AM],Ad?,N$/)
    const fc = expectSane(fit, 30, 5)
    // The next values of the line are 140, 143, ... (137 is t = 29's trend value).
    fc.forEach((v, i) => expect(Math.abs(v - (140 + 3 * i))).toBeLessThan(4))
  })

  it('picks a seasonal form on a clear monthly pattern and repeats it', () => {
    const pattern = [10, 12, 15, 30, 60, 90, 95, 70, 40, 20, 12, 10]
    const series = Array.from({ length: 48 }, (_, t) => pattern[t % 12]! * (1 + 0.01 * ((t * 7) % 5 - 2)))
    const fit = fitStateSpaceSmoothing(series, 12)
    expect(fit.form).toMatch(/,[AM]$/)
    const fc = expectSane(fit, 48, 12)
    fc.forEach((v, i) => expect(Math.abs(v - pattern[i]!) / pattern[i]!).toBeLessThan(0.1))
  })

  it('names the chosen form in params and lists every form tried', () => {
    const pattern = [10, 12, 15, 30, 60, 90, 95, 70, 40, 20, 12, 10]
    const series = Array.from({ length: 36 }, (_, t) => pattern[t % 12]! + t)
    const fit = fitStateSpaceSmoothing(series, 12)
    expect(Object.keys(fit.formScores)).toHaveLength(15)
    expect(fit.formScores[fit.form]).toBe(fit.aicc)
    for (const score of Object.values(fit.formScores)) expect(score).toBeGreaterThanOrEqual(fit.aicc)
    expect('seasonWeight' in fit.params).toBe(fit.form.endsWith('A') || fit.form.endsWith('M'))
    expect('damping' in fit.params).toBe(fit.form.includes('Ad'))
    expect(fit.params.multiplicativeError).toBe(fit.form.startsWith('M') ? 1 : 0)
  })

  it('never tries multiplicative parts on data with a zero or a negative value', () => {
    const series = Array.from({ length: 40 }, (_, t) => 5 + Math.sin(t) * 4 + (t === 3 ? -8 : 0))
    const fit = fitStateSpaceSmoothing(series, 4)
    for (const name of Object.keys(fit.formScores)) expect(name).toMatch(/^A,.*,[NA]$/)
  })

  // Hand-checkable property of the class-2 formula: it must agree with the sample
  // variance of many simulated futures of the same model (HKOS 2008, ch. 6).
  // 40,000 paths: the sampling error of a variance is about sqrt(2 / 40000) = 0.7%; tolerance 4%.
  it('gives class-2 variances that agree with simulation', () => {
    const series = ref.series.N1500.values
    for (const trend of ['none', 'add', 'damped'] as const) {
      const form: StateSpaceForm = { error: 'mul', trend, season: 'none' }
      expect(varianceMethod(form)).toBe('class-2')
      const est = estimateForm(form, series, 1)
      const point = pointForecasts(form, est.run, series.length, est.weights.phi, 12)
      const analytic = forecastVariances(form, est.weights, est.run, point, series.length)
      const simulated = simulatedVariances(form, est.weights, est.run, series.length, 12, 40000)
      expect(maxRelError(analytic, simulated)).toBeLessThan(0.04)
    }
  })

  it('simulates variances reproducibly from its fixed seed', () => {
    const series = ref.series.N1500.values
    const fit = fitStateSpaceSmoothing(series, 12)
    expect(fit.forecastVariance!(18)).toEqual(fit.forecastVariance!(18))
  })
})

// Source: statsmodels 0.13.5 ETSModel (Debian python3-statsmodels), fixture made by
// scripts/fixtures/statsmodels_ets.py on the training parts of M3 series N0001, N0700,
// N1500 and N2000 (Makridakis and Hibon 2000).
describe('state-space-smoothing against statsmodels ETSModel', () => {
  for (const [id, series] of Object.entries(ref.series)) {
    const y = series.values
    const n = y.length
    for (const f of series.fits) {
      const form = formOf(f)
      const weights = { alpha: f.alpha, beta: f.beta ?? 0, gamma: f.gamma ?? 0, phi: f.phi ?? 1 }
      const initial = { level: f.initialLevel, trend: f.initialTrend ?? 0, season: f.initialSeason ?? [] }

      if (form.season !== 'mul') {
        // Same model equations: at statsmodels' estimates, log-likelihood, fitted values,
        // forecasts and exact variances agree to rounding (measured <= 3e-12; tolerance 1e-9).
        it(`${id} ${f.shortName}: same likelihood, fitted values and forecasts at statsmodels' estimates`, () => {
          const fitted: number[] = []
          const ev = evaluateForm(form, y, weights, initial, fitted)
          expect(approxEqual(ev.logLikelihood, f.llf, 1e-9)).toBe(true)
          expect(maxRelError(fitted, f.fitted)).toBeLessThan(1e-9)
          const point = pointForecasts(form, ev.run, n, weights.phi, series.horizon)
          expect(maxRelError(point, f.forecast)).toBeLessThan(1e-9)
          if (f.forecastVariance) {
            const variance = forecastVariances(form, weights, ev.run, point, n)
            expect(maxRelError(variance, f.forecastVariance)).toBeLessThan(1e-9)
          }
          // statsmodels counts all m starting seasonal states as free; we count m - 1 (one is
          // fixed by normalisation), so its AICc is ours with one parameter more.
          const extra = form.season === 'none' ? 0 : 1
          expect(approxEqual(aiccOf(ev.logLikelihood, n, ev.parameterCount + extra), f.aicc, 1e-9)).toBe(true)
        })
      }

      // Our maximum-likelihood search must reach at least statsmodels' likelihood (measured:
      // equal or higher on all 51 forms; tolerance 1e-3). For multiplicative seasons the
      // models differ slightly: statsmodels 0.13.5 updates s_t = s_{t-m} + gamma e_t / l_t,
      // we follow HKOS 2008 table 2.2, s_t = s_{t-m} (1 + gamma eps_t) = s_{t-m} + gamma e_t / q_t,
      // so there only the likelihoods are compared.
      it(`${id} ${f.shortName}: maximum likelihood at least statsmodels'`, () => {
        const est = estimateForm(form, y, series.seasonLength)
        expect(est.logLikelihood).toBeGreaterThanOrEqual(f.llf - 1e-3)
      })
    }
  }
})
