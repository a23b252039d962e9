import { constants, createDeflateRaw, createInflateRaw, deflateRawSync, inflateRawSync, type DeflateRaw, type InflateRaw } from 'node:zlib'
import { ITEM_DICTIONARY } from './item-dictionary.js'
import { STRUCTURE_DICTIONARY } from './item-structure-dictionary.js'

/**
 * Raw DEFLATE (RFC 1951) of stored result items with a preset dictionary
 * (STRUCTURE_DICTIONARY for format 0x03, ITEM_DICTIONARY for 0x02), one item
 * of a few KB at a time.
 *
 * zlib's one-shot calls (deflateRawSync, inflateRawSync) build a stream object
 * and a zlib state and tear both down again for every call: for a 4 KB item
 * that is most of the cost (bench:codec: inflate ~20 us one-shot against
 * ~7 us on a kept state). So each thread keeps one deflate and one inflate
 * stream and runs items through its native handle, reset between items
 * (node:zlib internals `_handle.writeSync`, `_handle.reset` and `_writeState`,
 * which the one-shot calls use themselves; the same in Node 18 to 22), one
 * pair per dictionary. Anything
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
export const ITEM_DEFLATE_STRATEGY = constants.Z_FILTERED

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

/** Kept states of one preset dictionary: created on first use, replaced after an error. */
class DictionaryStates {
  private deflating: Kept | null | undefined
  private inflating: Kept | null | undefined

  constructor(private readonly dictionary: Buffer) {}

  private deflater(): Kept | null {
    if (this.deflating === undefined) {
      this.deflating = keep(createDeflateRaw({ dictionary: this.dictionary, level: ITEM_DEFLATE_LEVEL, strategy: ITEM_DEFLATE_STRATEGY }))
    }
    return this.deflating
  }

  /** The raw DEFLATE of `json` in `out` (its length), or null when the one-shot call must be used. */
  deflateKept(json: Buffer): number | null {
    const kept = this.deflater()
    const n = kept !== null && json.length < BUFFER_BYTES / 2 ? run(kept, json) : null
    if (n === null && this.deflating?.stream.destroyed) this.deflating = undefined
    return n
  }

  deflateOneShot(json: Buffer): Buffer {
    return deflateRawSync(json, { dictionary: this.dictionary, level: ITEM_DEFLATE_LEVEL, strategy: ITEM_DEFLATE_STRATEGY })
  }

  inflate(stored: Buffer): Buffer {
    if (this.inflating === undefined) this.inflating = keep(createInflateRaw({ dictionary: this.dictionary }))
    const n = this.inflating !== null ? run(this.inflating, stored) : null
    if (n !== null) return Buffer.from(out!.subarray(0, n))
    if (this.inflating?.stream.destroyed) this.inflating = undefined
    return inflateRawSync(stored, { dictionary: this.dictionary })
  }
}

let out: Buffer | null = null

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

/** The preset dictionaries of the stored formats that have one (item-codec.ts). */
export type ItemDictionary = 'served' | 'structure'

const states: Record<ItemDictionary, DictionaryStates> = {
  served: new DictionaryStates(ITEM_DICTIONARY),
  structure: new DictionaryStates(STRUCTURE_DICTIONARY),
}

/** `header` then the raw DEFLATE of `json` with `dictionary`, in one buffer. */
export function deflateWithHeader(header: number, json: Buffer, dictionary: ItemDictionary): Buffer {
  const codec = states[dictionary]
  const n = codec.deflateKept(json)
  if (n === null) return Buffer.concat([Buffer.of(header), codec.deflateOneShot(json)])
  const stored = Buffer.allocUnsafe(n + 1)
  stored[0] = header
  out!.copy(stored, 1, 0, n)
  return stored
}

export function deflateItem(json: Buffer, dictionary: ItemDictionary): Buffer {
  const codec = states[dictionary]
  const n = codec.deflateKept(json)
  return n !== null ? Buffer.from(out!.subarray(0, n)) : codec.deflateOneShot(json)
}

export function inflateItem(stored: Buffer, dictionary: ItemDictionary): Buffer {
  return states[dictionary].inflate(stored)
}
