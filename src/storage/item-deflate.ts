import { constants, createDeflateRaw, createInflateRaw, deflateRawSync, inflateRawSync, type DeflateRaw, type InflateRaw } from 'node:zlib'
import { ITEM_DICTIONARY } from './item-dictionary.js'

/**
 * Raw DEFLATE (RFC 1951) of stored result items with the preset dictionary
 * ITEM_DICTIONARY, one item of a few KB at a time.
 *
 * zlib's one-shot calls (deflateRawSync, inflateRawSync) build a stream object
 * and a zlib state and tear both down again for every call: for a 4 KB item
 * that is most of the cost (bench:codec: inflate ~20 us one-shot against
 * ~7 us on a kept state). So each thread keeps one deflate and one inflate
 * stream and runs items through its native handle, reset between items
 * (node:zlib internals `_handle.writeSync`, `_handle.reset` and `_writeState`,
 * which the one-shot calls use themselves; the same in Node 18 to 22). Anything
 * unexpected (internals missing, an error, output that does not fit) answers
 * with the one-shot call instead, which gives the same bytes or the proper
 * zlib error, and a state that errored is replaced.
 */
/**
 * zlib level 5 rather than the default 6: deflate of a served item with the
 * dictionary measured 74 against 83 us (2,000 bench items, interleaved runs,
 * load 3) for 690 against 672 B. Level 3 took 59 us but 758 B, and on items
 * where every candidate is scored it was 14% larger than format 0x01.
 */
export const ITEM_DEFLATE_LEVEL = 5

/**
 * Z_FILTERED (fewer short string matches, more literal coding): items are mostly
 * digits, and it stored 701 against 726 B per item on average at the same speed
 * (2,000 bench items, 34.0 against 34.8 us). Readers are unaffected: a strategy
 * only changes which valid DEFLATE stream is written.
 */
const ITEM_DEFLATE_STRATEGY = constants.Z_FILTERED

/** Largest input/output handled on the kept state; larger items take the one-shot path. */
const BUFFER_BYTES = 256 * 1024

interface Handle {
  writeSync(flush: number, input: Buffer, inOff: number, inLen: number, out: Buffer, outOff: number, outLen: number): void
  reset(): void
}

interface Kept {
  readonly stream: DeflateRaw | InflateRaw
  readonly handle: Handle
  /** [availOutAfter, availInAfter] of the last write, filled by the native handle. */
  readonly state: Uint32Array
}

const keep = (stream: DeflateRaw | InflateRaw): Kept | null => {
  const internals = stream as unknown as { _handle?: Partial<Handle>; _writeState?: unknown }
  const handle = internals._handle
  const state = internals._writeState
  if (typeof handle?.writeSync !== 'function' || typeof handle.reset !== 'function' || !(state instanceof Uint32Array) || state.length < 2) {
    return null
  }
  stream.on('error', () => {}) // an error destroys the stream; the caller sees it and replaces the state
  return { stream, handle: handle as Handle, state }
}

const options = { dictionary: ITEM_DICTIONARY }
let out: Buffer | null = null
let deflating: Kept | null | undefined
let inflating: Kept | null | undefined

/** Runs `input` through a kept state; the output stays in `out` (null when the caller should use the one-shot call). */
function run(kept: Kept, input: Buffer): number | null {
  out ??= Buffer.allocUnsafe(BUFFER_BYTES)
  try {
    kept.handle.reset()
    kept.handle.writeSync(constants.Z_FINISH, input, 0, input.length, out, 0, out.length)
  } catch {
    return null
  }
  const [availOut, availIn] = kept.state
  if (kept.stream.destroyed || availIn !== 0 || availOut === 0) return null
  return out.length - availOut!
}

function deflater(): Kept | null {
  if (deflating === undefined) deflating = keep(createDeflateRaw({ ...options, level: ITEM_DEFLATE_LEVEL, strategy: ITEM_DEFLATE_STRATEGY }))
  return deflating
}

/** `header` then the raw DEFLATE of `json`, in one buffer. */
export function deflateWithHeader(header: number, json: Buffer): Buffer {
  const kept = deflater()
  const n = kept !== null && json.length < BUFFER_BYTES / 2 ? run(kept, json) : null
  if (n === null) return Buffer.concat([Buffer.of(header), deflateItem(json)])
  const stored = Buffer.allocUnsafe(n + 1)
  stored[0] = header
  out!.copy(stored, 1, 0, n)
  return stored
}

export function deflateItem(json: Buffer): Buffer {
  const kept = deflater()
  const n = kept !== null && json.length < BUFFER_BYTES / 2 ? run(kept, json) : null
  if (n !== null) return Buffer.from(out!.subarray(0, n))
  if (deflating?.stream.destroyed) deflating = undefined
  return deflateRawSync(json, { ...options, level: ITEM_DEFLATE_LEVEL, strategy: ITEM_DEFLATE_STRATEGY })
}

export function inflateItem(stored: Buffer): Buffer {
  if (inflating === undefined) inflating = keep(createInflateRaw(options))
  const n = inflating !== null ? run(inflating, stored) : null
  if (n !== null) return Buffer.from(out!.subarray(0, n))
  if (inflating?.stream.destroyed) inflating = undefined
  return inflateRawSync(stored, options)
}
