import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { decade, round } from '../../../src/storage/items/item-common.js'

// decade(a) replaces Math.floor(Math.log10(a)) in the stored-item writers; the stored
// bytes stay the same only if it gives the same value for every positive finite double.
const reference = (a: number) => Math.floor(Math.log10(a))

describe('decade', () => {
  it('equals floor(log10(a)) next to every power of ten from 1e-8 to 1e17', () => {
    for (let k = -8; k <= 17; k++) {
      const p = 10 ** k
      for (let u = -3000; u <= 3000; u++) {
        for (const a of [p * (1 + u * Number.EPSILON), p * (1 + u * 1e-15)]) {
          if (decade(a) !== reference(a)) expect({ a, decade: decade(a) }).toEqual({ a, decade: reference(a) })
        }
      }
    }
  })

  it('equals floor(log10(a)) for any positive finite double', () => {
    fc.assert(
      fc.property(fc.double({ min: Number.MIN_VALUE, max: Number.MAX_VALUE, noNaN: true }), (a) => decade(a) === reference(a)),
      { numRuns: 20_000 },
    )
    fc.assert(
      fc.property(fc.double({ min: -8, max: 18, noNaN: true }), (e) => {
        const a = 10 ** e
        return decade(a) === reference(a)
      }),
      { numRuns: 50_000 },
    )
  })
})

describe('round', () => {
  it('equals Number(x.toPrecision(digits)) for any double, 4 and 7 digits', () => {
    const spread = fc.tuple(fc.double({ min: 1, max: 10, noNaN: true }), fc.integer({ min: -30, max: 30 }), fc.boolean())
      .map(([m, e, neg]) => (neg ? -1 : 1) * m * 10 ** e)
    // Decimal ties: the binary value decides, as toPrecision's exact rounding does.
    const ties = fc.tuple(fc.integer({ min: 1, max: 99_999_999 }), fc.integer({ min: -10, max: 10 })).map(([m, e]) => (m + 0.5) * 10 ** e)
    fc.assert(
      fc.property(fc.oneof(fc.double({ noNaN: true, noDefaultInfinity: true }), spread, ties), fc.constantFrom(4, 7), (x, digits) =>
        Object.is(round(x, digits), x === 0 ? x : Number(x.toPrecision(digits))),
      ),
      { numRuns: 50_000 },
    )
  })
})
