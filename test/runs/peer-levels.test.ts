import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../src/engine/index.js'
import { forecastItem } from '../../src/runs/forecast-sku.js'
import { blendWithPeers, MIN_PEERS, ownWeight, peerLevel, peerTagOf, recentLevel } from '../../src/runs/peer-levels.js'
import { RunSettings } from '../../src/schemas/run.js'

/**
 * New products blended with their peers' level (issue 12, "honest short histories"). The rule is
 * our own (a credibility weighting, Buhlmann 1967, cited from memory; the 6-period weight is our
 * choice), so the checks are worked by hand.
 */

describe('peer levels', () => {
  it('takes the mean of the last known values of a season, skipping missing ones', () => {
    expect(recentLevel([1, 2, 3, 4, 5, 6], 4)).toBe(4.5) // (3 + 4 + 5 + 6) / 4
    expect(recentLevel([10, null, 20, null], 2)).toBe(15)
    expect(recentLevel([null, null], 3)).toBeNull()
  })

  it('is the median of at least MIN_PEERS levels, keyed to the first tag of the prefix', () => {
    expect(MIN_PEERS).toBe(3)
    expect(peerLevel('category:garden', [80, 120])).toBeNull()
    expect(peerLevel('category:garden', [120, 80, 100])).toEqual({ tag: 'category:garden', level: 100, peers: 3 })
    expect(peerLevel('category:garden', [10, 40, 20, 1000])).toEqual({ tag: 'category:garden', level: 30, peers: 4 })
    expect(peerTagOf(['kind:new-product', 'category:garden', 'category:other'], 'category:')).toBe('category:garden')
    expect(peerTagOf(['kind:new-product'], 'category:')).toBeNull()
  })

  it('weighs the own forecast n / (n + 6) and moves the bands with their point', () => {
    expect(ownWeight(4)).toBe(0.4)
    const own = forecastSeries({ demand: [10, 12, 11, 13], frequency: 'month', horizon: 3 })
    const blended = blendWithPeers(own, { tag: 'category:garden', level: 100, peers: 3 }, 4, false)
    own.forecast.forEach((p, i) => {
      const b = blended.forecast[i]!
      // 0.4 x own + 0.6 x 100
      expect(b.demand).toBeCloseTo(0.4 * p.demand + 60, 12)
      p.intervals.forEach((band, k) => {
        expect(b.intervals[k]!.high - b.demand).toBeCloseTo(band.high - p.demand, 9)
      })
    })
  })
})

describe('a new product in a run that asks for peers', () => {
  const settings = RunSettings.parse({ horizon: 3, newProductPeers: { tagPrefix: 'category:' } })
  const peer = { tag: 'category:garden', level: 100, peers: 5 }

  it('is blended, with a warning that says with whom and by how much', () => {
    const alone = forecastItem(forecastSeries, settings, { sku: 'PLANTER-NEW', demand: [10, 12, 11, 13] })
    const item = forecastItem(forecastSeries, settings, { sku: 'PLANTER-NEW', demand: [10, 12, 11, 13], peerLevel: peer })
    if ('failure' in item || 'failure' in alone) throw new Error('no forecast')
    item.forecast.forEach((p, i) => expect(p.demand).toBeCloseTo(0.4 * alone.forecast[i]!.demand + 0.6 * 100, 9))
    expect(item.warnings).toContainEqual({
      code: 'peer-level-blended',
      message:
        'a new product (4 periods): its forecast is blended with the level of 5 SKUs tagged category:garden (median recent demand 100), ' +
        'weight 0.4 on its own forecast and 0.6 on theirs',
    })
  })

  it('is left alone once it has 10 periods of its own', () => {
    const demand = [10, 12, 11, 13, 12, 11, 14, 12, 13, 12]
    const alone = forecastItem(forecastSeries, settings, { sku: 'PLANTER-OLD', demand })
    const item = forecastItem(forecastSeries, settings, { sku: 'PLANTER-OLD', demand, peerLevel: peer })
    expect(item).toEqual(alone)
  })
})
