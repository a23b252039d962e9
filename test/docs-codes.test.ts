import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { DELIVERY_FAILURE_CODES } from '../src/callbacks/processor.js'
import { RUN_FAILURE_CODES, SERVICE_ITEM_FAILURE_CODES, SERVICE_WARNING_CODES } from '../src/runs/failures.js'
import { FIRING_FAILURE_CODES } from '../src/schedules/fire.js'

const root = new URL('..', import.meta.url).pathname
const read = (path: string) => readFileSync(join(root, path), 'utf8')

/** The codes in the first column of the table under `heading` (up to the next heading of any level). */
function codesUnder(doc: string, heading: string): string[] {
  const start = `\n${doc}`.indexOf(`\n${heading}\n`)
  if (start < 0) throw new Error(`no section ${heading}`)
  const rest = `\n${doc}`.slice(start + heading.length + 2)
  const end = rest.search(/\n#+ /)
  return (end < 0 ? rest : rest.slice(0, end))
    .split('\n')
    .filter((line) => line.startsWith('| `'))
    .map((line) => line.split('|')[1]!.trim().replace(/`/g, ''))
}

function sourceFiles(dir: string): string[] {
  return readdirSync(join(root, dir)).flatMap((name) => {
    const path = join(dir, name)
    return statSync(join(root, path)).isDirectory() ? sourceFiles(path) : path.endsWith('.ts') ? [path] : []
  })
}

/**
 * Warning codes the engine writes: every quoted code in a `code:` expression of
 * src/engine (the engine uses `code:` only for warnings; errors take their code as
 * a constructor argument). A string compared with `===` is a condition, not a code.
 */
function engineWarningCodes(): string[] {
  const codes = new Set<string>()
  for (const file of sourceFiles('src/engine')) {
    for (const m of read(file).matchAll(/\bcode:([^\n]*)/g)) {
      for (const q of m[1]!.matchAll(/(=== )?'([a-z][a-z0-9-]*)'/g)) if (!q[1]) codes.add(q[2]!)
    }
  }
  return [...codes]
}

const sorted = (xs: readonly string[]) => [...xs].sort()

describe('docs/warnings.md', () => {
  it('lists exactly the warning codes the engine and the service write', () => {
    const written = [...engineWarningCodes(), ...SERVICE_WARNING_CODES]
    expect(written.length).toBeGreaterThan(10)
    expect(sorted(codesUnder(read('docs/warnings.md'), '# Warnings'))).toEqual(sorted(written))
  })
})

describe('docs/problems.md failure codes', () => {
  const doc = read('docs/problems.md')

  it('lists exactly the engine input error codes and the service codes for failed items', () => {
    const union = /export type EngineErrorCode =([^;]*?)\n\n/s.exec(read('src/engine/errors.ts'))![1]!
    const engineCodes = [...union.matchAll(/'([a-z-]+)'/g)].map((m) => m[1]!)
    expect(engineCodes.length).toBeGreaterThan(3)
    expect(sorted(codesUnder(doc, '### A result item (`items[].failure`)'))).toEqual(sorted([...engineCodes, ...SERVICE_ITEM_FAILURE_CODES]))
  })

  it('lists exactly the run, delivery and firing failure codes', () => {
    expect(sorted(codesUnder(doc, '### A run (`failure` on the run)'))).toEqual(sorted(RUN_FAILURE_CODES))
    expect(sorted(codesUnder(doc, '### A callback delivery attempt (`attempts[].failure`)'))).toEqual(sorted(DELIVERY_FAILURE_CODES))
    expect(sorted(codesUnder(doc, '### A schedule firing (`firings.lastFailure`)'))).toEqual(sorted(FIRING_FAILURE_CODES))
  })
})
