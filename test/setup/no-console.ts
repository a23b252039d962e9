import { afterEach, beforeEach, vi } from 'vitest'

// A test that writes to the console fails: diagnostics belong in return values
// (engine) or the structured logger (service), not in stray console calls.
const methods = ['log', 'info', 'warn', 'error', 'debug'] as const
const calls: string[] = []

beforeEach(() => {
  calls.length = 0
  for (const m of methods) {
    vi.spyOn(console, m).mockImplementation((...args: unknown[]) => {
      calls.push(`${m}: ${args.map(String).join(' ').slice(0, 200)}`)
    })
  }
})

afterEach(() => {
  vi.restoreAllMocks()
  if (calls.length > 0) {
    const seen = calls.splice(0)
    throw new Error(`test wrote to the console:\n${seen.join('\n')}`)
  }
})
