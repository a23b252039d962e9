import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import {
  PROBLEM_TYPES,
  ProblemError,
  formatFieldPath,
  problemBody,
  problemTypeUri,
  type ProblemSlug,
} from '../src/errors.js'

const docs = readFileSync(new URL('../docs/problems.md', import.meta.url), 'utf8')

/** Rows of the problem-type table in docs/problems.md (its first section): slug, status, title. */
function documentedTypes(): { slug: string; status: number; title: string }[] {
  return docs
    .slice(0, docs.indexOf('\n## Failure codes'))
    .split('\n')
    .filter((line) => line.startsWith('| `'))
    .map((line) => {
      const cells = line.split('|').map((c) => c.trim())
      return { slug: cells[1]!.replace(/`/g, ''), status: Number(cells[2]), title: cells[3]! }
    })
}

describe('problem catalogue', () => {
  it('docs/problems.md lists exactly the catalogued types with the same status and title', () => {
    const catalogued = Object.entries(PROBLEM_TYPES)
      .map(([slug, { status, title }]) => ({ slug, status, title }))
      .sort((a, b) => a.slug.localeCompare(b.slug))
    const documented = documentedTypes().sort((a, b) => a.slug.localeCompare(b.slug))
    expect(documented).toEqual(catalogued)
  })

  it('every type is a URI under the problems base and has a 4xx/5xx status', () => {
    for (const slug of Object.keys(PROBLEM_TYPES) as ProblemSlug[]) {
      expect(problemTypeUri(slug)).toBe(`https://almanac.example/problems/${slug}`)
      expect(PROBLEM_TYPES[slug].status).toBeGreaterThanOrEqual(400)
    }
  })

  it('500 says only Internal Server Error', () => {
    expect(problemBody('internal')).toEqual({
      type: 'https://almanac.example/problems/internal',
      title: 'Internal Server Error',
      status: 500,
    })
  })

  it('ProblemError carries status, detail, field errors and headers', () => {
    const err = new ProblemError('unauthorized', 'no key', undefined, { 'www-authenticate': 'Bearer' })
    expect(err.statusCode).toBe(401)
    expect(err.headers).toEqual({ 'www-authenticate': 'Bearer' })
    expect(err.toBody()).toEqual({
      type: 'https://almanac.example/problems/unauthorized',
      title: 'Unauthorized',
      status: 401,
      detail: 'no key',
    })
  })
})

describe('formatFieldPath', () => {
  it('writes indexes in brackets and keys with dots', () => {
    expect(formatFieldPath(['series', 3, 'values', 2], 'body')).toBe('series[3].values[2]')
    expect(formatFieldPath(['horizon'], 'body')).toBe('horizon')
    expect(formatFieldPath([0, 'sku'], 'body')).toBe('[0].sku')
  })

  it('names the request part when the path is empty', () => {
    expect(formatFieldPath([], 'body')).toBe('body')
  })
})
