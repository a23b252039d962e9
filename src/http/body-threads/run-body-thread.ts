import sjson from 'secure-json-parse'
import { kTransferable, kValue, markMovable } from 'tinypool'
import { MAX_FIELD_ERRORS } from '../../errors.js'
import { checkInlineOptions, checkRunOptions, checkUniqueSkus, RunInputError } from '../../runs/input.js'
import { boundedSafeParse } from '../../schemas/bounded-parse.js'
import { RunSubmission, type RunSettings } from '../../schemas/run.js'
import { parseRunSubmissionFast } from '../../schemas/series-check.js'

/** A large POST /v1/runs body, as posted to a pool thread (body-pool.ts). */
export interface RunBodyTask {
  /** The body's UTF-8 bytes, in blocks (a character may straddle two). */
  readonly blocks: readonly Uint8Array[]
  readonly chunkSize: number
}

/** A validation issue as the route's validator reports it (validation.ts), plain so it crosses threads. */
export interface PlainIssue {
  readonly path: (string | number)[]
  readonly message: string
  readonly code: string
}

/** What the thread made of the body: every outcome the route would reach with the body parsed on the event loop. */
export type RunBodyOutcome =
  /** Not JSON, or JSON that would set an object's prototype (the API's parser refuses both alike). */
  | { readonly kind: 'malformed' }
  | { readonly kind: 'invalid'; readonly issues: PlainIssue[]; readonly more: boolean }
  | { readonly kind: 'refused'; readonly message: string; readonly field: string }
  /** Stored histories named by scope: a small body once parsed, handled as any other. */
  | { readonly kind: 'scope'; readonly body: RunSubmission }
  /**
   * Inline series, checked and already cut into the chunk inputs the run store writes
   * (RunStore.createRun's format), as UTF-8 bytes: they cross back to the event loop
   * transferred, not copied, and go to Redis as they are.
   */
  | { readonly kind: 'inline'; readonly settings: RunSettings; readonly total: number; readonly chunks: Uint8Array[] }

/** The blocks as one string; the decoder keeps a character split between blocks whole. */
export function decodeBlocks(blocks: readonly Uint8Array[]): string {
  const decoder = new TextDecoder()
  let text = ''
  for (const block of blocks) text += decoder.decode(block, { stream: true })
  return text + decoder.decode()
}

/**
 * Runs on a pool thread: parses a large run body (with the same prototype-poisoning
 * rule as the API's JSON parser), validates it as the route does (the plain fast
 * path, else the bounded zod parse), applies the gateway's checks, and cuts inline
 * series into chunk inputs. So the API's event loop never holds a body of tens of
 * megabytes as objects: it receives either a small answer or the chunk strings.
 */
export function prepareRunBody(task: RunBodyTask): RunBodyOutcome {
  let data: unknown
  try {
    data = sjson.parse(decodeBlocks(task.blocks), undefined, { protoAction: 'error', constructorAction: 'error' })
  } catch {
    return { kind: 'malformed' }
  }
  let body: RunSubmission
  const fast = parseRunSubmissionFast(data)
  if (fast !== null) body = fast
  else {
    const result = boundedSafeParse(RunSubmission, data, MAX_FIELD_ERRORS)
    if (!result.success) {
      return { kind: 'invalid', issues: result.issues.map(({ path, message, code }) => ({ path: path.map((p) => (typeof p === 'number' ? p : String(p))), message, code })), more: result.more }
    }
    body = result.data
  }
  const { series, scope, ...settings } = body
  if (series === undefined || scope !== undefined) return { kind: 'scope', body }
  try {
    checkRunOptions(settings)
    checkUniqueSkus(series)
    checkInlineOptions(settings)
  } catch (err) {
    if (err instanceof RunInputError) return { kind: 'refused', message: err.message, field: err.field }
    throw err
  }
  const encoder = new TextEncoder()
  const chunks: Uint8Array[] = []
  for (let c = 0; c * task.chunkSize < series.length; c++) chunks.push(encoder.encode(JSON.stringify(series.slice(c * task.chunkSize, (c + 1) * task.chunkSize))))
  return { kind: 'inline', settings, total: series.length, chunks }
}

/**
 * The pool's task: prepareRunBody, with the chunk inputs' memory handed back to the
 * event loop rather than copied (tinypool's movable results). Tens of megabytes of
 * strings crossing as a copy cost the event loop their decoding and collection.
 */
export default function runBodyTask(task: RunBodyTask): RunBodyOutcome | object {
  const outcome = prepareRunBody(task)
  if (outcome.kind !== 'inline') return outcome
  const moved = { [kTransferable]: outcome.chunks.map((c) => c.buffer), [kValue]: outcome }
  markMovable(moved)
  return moved
}
