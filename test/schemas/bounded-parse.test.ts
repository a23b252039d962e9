import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { safeParse } from 'zod/v4/core'
import { fieldIssues } from '../../src/errors.js'
import { boundedSafeParse } from '../../src/schemas/bounded-parse.js'
import { RunRequest, RunSubmission } from '../../src/schemas/run.js'

const pathKey = (p: readonly PropertyKey[]) => p.map(String).join('/')

/** A body of `n` series with `values` string demand values each: every value is an issue. */
function stringBody(n: number, values: number): { horizon: number; series: { sku: string; demand: string[] }[] } {
  return { horizon: 3, series: Array.from({ length: n }, (_, i) => ({ sku: `S${i}`, demand: Array.from({ length: values }, () => 'x') })) }
}

describe('boundedSafeParse (issue 14, finding 1: a huge invalid body must not collect every issue)', () => {
  it('stops after the issues it reports: it never reads past them', () => {
    // Seen failing before the fix: zod read every element, so the trap below threw.
    const body = stringBody(400, 24)
    Object.defineProperty(body.series, 300, {
      get() {
        throw new Error('read past the reported issues')
      },
    })
    const r = boundedSafeParse(RunSubmission, body, 100)
    expect(r.success).toBe(false)
    if (r.success) return
    expect(r.issues).toHaveLength(100)
    expect(r.more).toBe(true)
    expect(pathKey(r.issues[0]!.path)).toBe('series/0/demand/0')
    expect(pathKey(r.issues[99]!.path)).toBe('series/4/demand/3')
  })

  it('an unknown key named like an Object.prototype member is an unknown field, not a schema', () => {
    // Seen failing before the fix: `constructor` found Object.prototype.constructor as its "schema" (a 500).
    for (const key of ['constructor', 'toString', 'hasOwnProperty', 'valueOf']) {
      const body = JSON.parse(`{"horizon": 3, "series": [{"sku": "A", "demand": [1, 2, 3]}], "${key}": 1}`) as unknown
      const r = boundedSafeParse(RunSubmission, body, 100)
      expect(r.success, key).toBe(false)
      if (r.success) continue
      expect(r.issues, key).toEqual([{ path: [key], message: 'is not a field of this request', code: 'unrecognized_keys' }])
    }
  })

  it('names unknown fields of strict objects one by one, also stopping', () => {
    const body = { horizon: 3, series: Array.from({ length: 500 }, (_, i) => ({ sku: `S${i}`, demand: [1], extra: 1 })) }
    const r = boundedSafeParse(RunSubmission, body, 100)
    expect(r.success).toBe(false)
    if (r.success) return
    expect(r.issues).toHaveLength(100)
    expect(r.more).toBe(true)
    expect(r.issues[0]).toEqual({ path: ['series', 0, 'extra'], message: 'is not a field of this request', code: 'unrecognized_keys' })
  })

  it('a million copies of one SKU make a bounded number of issues', () => {
    const series = Array.from({ length: 1_000_000 }, () => ({ sku: 'SAME', demand: [1] }))
    const r = boundedSafeParse(RunRequest, { horizon: 1, series }, 100)
    expect(r.success).toBe(false)
    if (r.success) return
    expect(r.issues).toHaveLength(100)
    expect(r.more).toBe(true)
    expect(r.issues[0]?.message).toBe('SKU "SAME" appears more than once')
  })

  it('names keys that are members of every object ("constructor", "__proto__") as unknown fields', () => {
    const body = JSON.parse('{"horizon":1,"constructor":1,"__proto__":2,"series":[{"sku":"A","demand":[1],"toString":3}]}')
    const r = boundedSafeParse(RunSubmission, body, 100)
    expect(r.success).toBe(false)
    if (r.success) return
    expect(r.issues.map((i) => pathKey(i.path)).sort()).toEqual(['__proto__', 'constructor', 'series/0/toString'])
  })

  it('a valid body parses exactly as the schema parses it', () => {
    const body = { horizon: 2, series: Array.from({ length: 100 }, (_, i) => ({ sku: `S${i}`, demand: [1, 2, null] })) }
    const r = boundedSafeParse(RunSubmission, body, 100)
    const z = safeParse(RunSubmission, body)
    expect(r.success).toBe(true)
    expect(z.success).toBe(true)
    if (r.success && z.success) expect(r.data).toEqual(z.data)
  })

  // One source of truth: the walk shortcuts the schema, so it must agree with it on generated bodies.
  it('agrees with the schema on success, output, and which fields are wrong', () => {
    const value = fc.oneof(fc.integer({ min: 0, max: 50 }), fc.constant(null), fc.constant('x'), fc.constant(2e15))
    const series = fc.record(
      {
        sku: fc.constantFrom('A', 'B', 'C', 'D', '', 'E\u0001'),
        demand: fc.array(value, { minLength: 0, maxLength: 70 }),
        seasonLength: fc.integer({ min: 0, max: 400 }),
        unknown: fc.constant(1),
      },
      { requiredKeys: ['sku', 'demand'] },
    )
    const body = fc.record({ horizon: fc.integer({ min: 0, max: 5 }), series: fc.array(series, { minLength: 0, maxLength: 40 }) })
    fc.assert(
      fc.property(body, (b) => {
        const bounded = boundedSafeParse(RunSubmission, b, 100)
        const full = safeParse(RunSubmission, b)
        expect(bounded.success).toBe(full.success)
        if (bounded.success && full.success) expect(bounded.data).toEqual(full.data)
        if (!bounded.success && !full.success) {
          const all = new Set(fieldIssues(full.error.issues).map((i) => pathKey(i.path)))
          for (const issue of bounded.issues) expect(all.has(pathKey(issue.path))).toBe(true)
          expect(bounded.issues.length).toBeLessThanOrEqual(100)
          if (!bounded.more) expect(new Set(bounded.issues.map((i) => pathKey(i.path)))).toEqual(all)
        }
      }),
      { numRuns: 300 },
    )
  })
})
