import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'

// Every error measure states its unit, the same one wherever it appears, in the
// OpenAPI document and in the glossary's table (docs/glossary.md, "Units of measures").
const doc = JSON.parse(readFileSync(new URL('../../openapi/openapi.json', import.meta.url), 'utf8')) as unknown
const glossary = readFileSync(new URL('../../docs/glossary.md', import.meta.url), 'utf8')

const UNITS: Record<string, string> = {
  mape: 'in percent',
  smape: 'in percent',
  wape: 'in percent',
  mae: 'in demand units',
  rmse: 'in demand units',
  pinball: 'in demand units',
  bias: 'in demand units',
  deviation: 'in demand units',
  mase: 'unitless',
  msis: 'unitless',
  trackingSignal: 'unitless',
  smoothedTrackingSignal: 'unitless',
  // The worklist's change of a forecast's sum.
  percent: 'in percent',
}

/** Every (property name, schema) pair anywhere in the document. */
function properties(
  node: unknown,
  out: [string, { description?: string; properties?: unknown; anyOf?: { properties?: unknown }[] }][] = [],
): typeof out {
  if (Array.isArray(node)) node.forEach((n) => properties(n, out))
  else if (typeof node === 'object' && node !== null) {
    const props = (node as { properties?: Record<string, unknown> }).properties
    if (props) for (const [name, schema] of Object.entries(props)) out.push([name, schema as { description?: string }])
    Object.values(node).forEach((n) => properties(n, out))
  }
  return out
}

describe('units of error measures', () => {
  // Measures are numbers; an object of the same name (the worklist's trackingSignal summary) is not one.
  const isObject = (schema: { properties?: unknown; anyOf?: { properties?: unknown }[] }) =>
    schema.properties !== undefined || (schema.anyOf ?? []).some((s) => s.properties !== undefined)
  const found = properties(doc).filter(([name, schema]) => name in UNITS && !isObject(schema))

  it('finds every measure in the document', () => {
    expect(new Set(found.map(([name]) => name))).toEqual(new Set(Object.keys(UNITS)))
  })

  it.each(Object.entries(UNITS))('%s is described %s everywhere', (name, unit) => {
    const descriptions = found.filter(([n]) => n === name).map(([, s]) => s.description ?? '(no description)')
    expect(descriptions.length).toBeGreaterThan(0)
    for (const d of descriptions) expect(d, `${name}: ${d}`).toContain(unit)
  })

  it('lists every measure in the glossary table', () => {
    const table = glossary.slice(glossary.indexOf('## Units of measures'))
    // As `name` or as the last part of a path (`change.percent`).
    for (const name of Object.keys(UNITS)) expect(table, name).toMatch(new RegExp(`[\`.]${name}\``))
  })
})
