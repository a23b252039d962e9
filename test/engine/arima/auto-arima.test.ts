import { describe, expect, it } from 'vitest'
import {
  arimaForecast,
  autoArima,
  difference,
  differences,
  differencingPolynomial,
  estimateArma,
  expandAr,
  expandMa,
  fitAutoArima,
  kpssStatistic,
  logLikelihoodAt,
  psiWeights,
  rootsOutsideUnitCircle,
  runAt,
  seasonalDifferences,
} from '../../../src/engine/arima/index.js'
import { approxEqual } from '../../../src/engine/numeric.js'
import ref from '../fixtures/statsmodels_sarimax/sarimax.json' with { type: 'json' }
import { expectEngineError, expectInputGuards, expectSane } from '../trend/spec-checks.js'

const close = (a: readonly number[], b: readonly number[], tol: number): void => {
  expect(a).toHaveLength(b.length)
  a.forEach((v, i) => expect(approxEqual(v, b[i]!, tol, 1e-12), `index ${i}: ${v} vs ${b[i]}`).toBe(true))
}

describe('auto-arima: polynomials (hand-checkable)', () => {
  it('multiplies out seasonal AR and MA polynomials and the differencing operator', () => {
    // (1 - 0.5B)(1 - 0.3B^4) = 1 - 0.5B - 0.3B^4 + 0.15B^5
    close(expandAr([0.5], [0.3], 4), [0.5, 0, 0, 0.3, -0.15], 1e-15)
    // (1 + 0.4B)(1 - 0.6B^4) = 1 + 0.4B - 0.6B^4 - 0.24B^5
    close(expandMa([0.4], [-0.6], 4), [0.4, 0, 0, -0.6, -0.24], 1e-15)
    // (1 - B)(1 - B^4) = 1 - B - B^4 + B^5
    close(differencingPolynomial(1, 1, 4), [1, 0, 0, 1, -1], 0)
    close(difference([1, 4, 9, 16, 25], differencingPolynomial(2, 0, 1)), [2, 2, 2], 0)
  })

  it('tells stationary from non-stationary AR polynomials', () => {
    expect(rootsOutsideUnitCircle([0.5])).toBe(true)
    expect(rootsOutsideUnitCircle([1.2])).toBe(false)
    expect(rootsOutsideUnitCircle([1])).toBe(false)
    // (1 - 0.7B)(1 - 0.8B) = 1 - 1.5B + 0.56B^2: roots 1/0.7 and 1/0.8
    expect(rootsOutsideUnitCircle([1.5, -0.56])).toBe(true)
    // (1 - 1.1B)(1 - 0.5B) = 1 - 1.6B + 0.55B^2
    expect(rootsOutsideUnitCircle([1.6, -0.55])).toBe(false)
    expect(rootsOutsideUnitCircle([])).toBe(true)
  })

  it('gives psi weights phi^j for an AR(1) and 1, theta, 0... for an MA(1)', () => {
    close(psiWeights([0.6], [], 5), [1, 0.6, 0.36, 0.216, 0.1296], 1e-15)
    close(psiWeights([], [0.3], 4), [1, 0.3, 0, 0], 0)
  })
})

describe('auto-arima: differencing orders', () => {
  it('differences a straight line once and a parabola twice (KPSS, 5% level)', () => {
    const line = Array.from({ length: 60 }, (_, t) => 3 + 2 * t + (t % 2) * 0.5)
    expect(kpssStatistic(line)).toBeGreaterThan(0.463)
    expect(differences(line)).toBe(1)
    const parabola = Array.from({ length: 60 }, (_, t) => t * t + (t % 2) * 0.5)
    expect(differences(parabola)).toBe(2)
    const level = Array.from({ length: 60 }, (_, t) => 10 + ((t * 7) % 5) - 2)
    expect(differences(level)).toBe(0)
  })

  it('takes a seasonal difference only for a strong season with two full seasons and one more point', () => {
    const pattern = [10, 12, 15, 30, 60, 90, 95, 70, 40, 20, 12, 10]
    const seasonal = Array.from({ length: 48 }, (_, t) => pattern[t % 12]! + ((t * 7) % 5))
    expect(seasonalDifferences(seasonal, 12)).toBe(1)
    expect(seasonalDifferences(seasonal.slice(0, 24), 12)).toBe(0)
    const flat = Array.from({ length: 48 }, (_, t) => 50 + ((t * 7) % 5))
    expect(seasonalDifferences(flat, 12)).toBe(0)
  })
})

describe('auto-arima: special cases', () => {
  it('rejects empty, non-finite and too-short input and a bad season length', () => {
    expectInputGuards(autoArima, 1)
    expectEngineError(() => fitAutoArima([1, 2, 3, 4, 5, 6, 7], 0), 'invalid-option')
  })

  it('forecasts a constant series as itself', () => {
    const fc = expectSane(autoArima.fit(new Array(30).fill(8), { seasonLength: 4 }), 30, 8)
    for (const v of fc) expect(approxEqual(v, 8, 1e-9)).toBe(true)
  })

  it('fits quarterly M3 training parts sanely', () => {
    const quarterly = ref.cases.filter((c) => c.seasonLength === 4)
    for (const c of quarterly) expectSane(autoArima.fit(c.values, { seasonLength: 4 }), c.values.length, c.horizon)
  })
})

// Source: statsmodels 0.13.5 SARIMAX (Debian python3-statsmodels), fixture made by
// scripts/fixtures/statsmodels_sarimax.py on the training parts of M3 series N0001, N0700 and
// N2000 (Makridakis and Hibon 2000). statsmodels' `intercept` c relates to our mean by
// mu = c / (phi(1) Phi(1)).
describe('auto-arima against statsmodels SARIMAX', () => {
  for (const c of ref.cases) {
    const [p, d, q] = c.order as [number, number, number]
    const [P, D, Q] = c.seasonalOrder as [number, number, number]
    const m = c.seasonLength
    const pr: Readonly<Record<string, number | undefined>> = c.params
    const ar = Array.from({ length: p }, (_, i) => pr[`ar.L${i + 1}`]!)
    const ma = Array.from({ length: q }, (_, i) => pr[`ma.L${i + 1}`]!)
    const seasonalAr = Array.from({ length: P }, (_, i) => pr[`ar.S.L${m * (i + 1)}`]!)
    const seasonalMa = Array.from({ length: Q }, (_, i) => pr[`ma.S.L${m * (i + 1)}`]!)
    const sum = (v: readonly number[]): number => v.reduce((x, y) => x + y, 0)
    const mean = c.trend === 'c' ? pr.intercept! / ((1 - sum(ar)) * (1 - sum(seasonalAr))) : 0
    const coefficients = { ar, ma, seasonalAr, seasonalMa, mean }
    const w = difference(c.values, differencingPolynomial(d, D, m))
    const label = `${c.id} (${p},${d},${q})(${P},${D},${Q})${m} trend ${c.trend}`

    // Same exact likelihood: measured difference <= 2e-13; tolerance 1e-9 relative.
    it(`${label}: same exact log-likelihood at statsmodels' estimates`, () => {
      expect(w).toHaveLength(c.nobs)
      const run = runAt(w, coefficients, m)!
      expect(approxEqual(logLikelihoodAt(run, w.length, pr.sigma2!), c.llf, 1e-9)).toBe(true)
    })

    // Our search must reach at least statsmodels' maximum (measured: equal or higher in all five).
    it(`${label}: maximum likelihood at least statsmodels'`, () => {
      const est = estimateArma(w, { p, d, q, P, D, Q }, m, c.trend === 'c')
      expect(est.logLikelihood).toBeGreaterThanOrEqual(c.llf - 1e-3)
    })

    if (c.forecast && c.forecastVariance) {
      // statsmodels forecasts from the undifferenced model, whose filter starts the
      // integrated states diffuse; we difference first and start the ARMA part stationary.
      // Without seasonal differencing the two agree to rounding (measured 3e-12); with it,
      // the different start leaves a trace (measured 3.6e-3). Variances: ours are the psi-weight
      // (infinite-past) formula, statsmodels' the exact finite-sample ones (measured <= 2.1e-3).
      it(`${label}: forecasts and variances as statsmodels' at its estimates`, () => {
        const run = runAt(w, coefficients, m)!
        const est = estimateArma(w, { p, d, q, P, D, Q }, m, false)
        const f = arimaForecast({ ...est, coefficients, run: { ...run, sigma2: pr.sigma2! } }, c.values, m, c.horizon)
        close(f.point, c.forecast!, D > 0 ? 1e-2 : 1e-9)
        close(f.variance, c.forecastVariance!, 1e-2)
      })
    }
  }
})
