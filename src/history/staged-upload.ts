import type { Frequency } from '../engine/index.js'
import { HistoryAccumulator, type GatheredGroup } from './accumulator.js'
import { ErrorCollector } from './errors.js'
import type { DuplicatePolicy, IncomingHistory, Origin } from './types.js'

/** What the CSV and NDJSON readers hand their good rows and series to. */
export interface UploadSink {
  readonly frequency: Frequency
  readonly errors: ErrorCollector
  addRow(sku: string, ordinal: number, demand: number, origin: Origin, dated?: boolean, tags?: readonly string[]): void
  addSeries(sku: string, incoming: IncomingHistory, origin: Origin): void
  /** Resolves once the sink can take more (a staged upload waits for its spill to be appended). */
  settle?(): Promise<void>
}

/**
 * What a reader does between stretches of its input (2,000 CSV records, one NDJSON
 * chunk): wait for a staged upload's spill in flight, so at most one is on its way,
 * and give the event loop a turn. Records a stream has already parsed reach the
 * reader in microtasks, which never let other requests in: a 500,000-SKU upload
 * held /healthz for up to 300 ms without this (bench:abuse, profiled).
 */
export async function pauseBetweenStretches(sink: UploadSink): Promise<void> {
  if (sink.settle !== undefined) await sink.settle()
  await new Promise<void>((resolve) => setImmediate(resolve))
}

/** A gathered upload as the committing step reads it: its SKUs in parts, each SKU in exactly one part. */
export interface GatheredUpload {
  readonly frequency: Frequency
  readonly errors: ErrorCollector
  /** Each part's accumulator in turn; a part is filled only when it is reached. */
  parts(): AsyncIterable<HistoryAccumulator>
}

/**
 * Where a staged upload keeps its records while the rest of the body arrives:
 * lists of text chunks, one list per part, private to one upload and gone once
 * it is written or refused (and on their own after a while, should the process die).
 */
export interface UploadStaging {
  /** Append one chunk to each part named (chunks of a part are read back in the order appended). */
  append(chunks: ReadonlyMap<number, string>): Promise<void>
  /** Every chunk appended to the part, in order. */
  read(part: number): Promise<string[]>
  /** Forget the parts named. */
  discard(parts: readonly number[]): Promise<void>
}

/** How a staged upload splits and when it moves what it gathered out of memory. */
export interface StagingLimits {
  /** Parts a spilled upload is split into by SKU (a part is committed with its SKUs in memory). */
  readonly parts: number
  /** Estimated bytes of gathered rows held in memory before they go to the staging area (UPLOAD_SPILL_BYTES). */
  readonly spillBytes: number
}

/**
 * Parts of a spilled upload: a body at the default 64 MiB limit leaves about
 * 1 MiB of text per part to gather in memory at commit time.
 */
export const STAGED_PARTS = 64

/**
 * Heap bytes one gathered SKU and one SKU-period cost in a HistoryAccumulator
 * (a Map per SKU, an entry per period), rounded up from heap snapshots of
 * bench:history; used only to decide when to spill.
 */
const BYTES_PER_SKU = 250
const BYTES_PER_CELL = 40

/** SKUs encoded between two turns of the event loop while a stretch is staged. */
const SPLIT_SLICE = 2000

/**
 * An upload read as a stream whose memory does not grow with its size. Rows
 * are gathered (summed per SKU and period) in a HistoryAccumulator as before;
 * once it holds more than `spillBytes`, what it holds is split by SKU into
 * parts, appended to the staging area (Redis) as text, and gathering starts
 * afresh. At commit each part is replayed into its own accumulator, merged and
 * written before the next is read. Nothing reaches the stored histories until
 * the whole body was read and the mode checked, so a refused upload stores
 * nothing. An upload that never spills is committed from its one accumulator,
 * exactly as before.
 *
 * Once spilled, whether a SKU given both as a series and as rows is refused is
 * decided at replay, in file order: a stretch holds one SKU's rows only while
 * no series of that SKU comes between them (such a series starts a new
 * stretch), so every row of a stretch gets the same verdict, and the stored
 * histories and counts are those of the in-memory path. Only the report
 * differs: a stretch's refused rows are one error at its first line (counting
 * them all), listed after the rows refused while reading, and `kinds` and
 * `span` count them too.
 */
export class StagedUpload implements UploadSink, GatheredUpload {
  readonly errors = new ErrorCollector()
  private current: HistoryAccumulator
  /** Parts with chunks in the staging area (or on their way there). */
  private readonly spilled = new Set<number>()
  /** True from the first spill on (the staging itself may still be under way). */
  private spills = false
  private staged = 0
  private appending: Promise<void> = Promise.resolve()
  /** Kinds and span of the stretches already spilled. */
  private spilledKinds = { dated: 0, period: 0 }
  private lo = Infinity
  private hi = -Infinity

  constructor(
    private readonly opts: { readonly frequency: Frequency; readonly duplicates: DuplicatePolicy },
    private readonly staging: UploadStaging,
    private readonly limits: StagingLimits,
  ) {
    this.current = this.accumulator()
  }

  get frequency(): Frequency {
    return this.opts.frequency
  }

  get kinds(): { readonly dated: number; readonly period: number } {
    const now = this.current.kinds
    return { dated: now.dated + this.spilledKinds.dated, period: now.period + this.spilledKinds.period }
  }

  get span(): { readonly lo: number; readonly hi: number } | null {
    const now = this.current.span
    const lo = Math.min(this.lo, now?.lo ?? Infinity)
    const hi = Math.max(this.hi, now?.hi ?? -Infinity)
    return lo <= hi ? { lo, hi } : null
  }

  /** Parts that went to the staging area (for the upload's log line). */
  get partsStaged(): number {
    return this.staged
  }

  addRow(sku: string, ordinal: number, demand: number, origin: Origin, dated = false, tags?: readonly string[]): void {
    if (this.spills && this.current.holds(sku) === 'series') this.spill()
    this.current.addRow(sku, ordinal, demand, origin, dated, tags)
    if (this.heldBytes() >= this.limits.spillBytes) this.spill()
  }

  addSeries(sku: string, incoming: IncomingHistory, origin: Origin): void {
    if (this.spills && this.current.holds(sku) !== null) this.spill()
    this.current.addSeries(sku, incoming, origin)
    if (this.heldBytes() >= this.limits.spillBytes) this.spill()
  }

  /**
   * Wait for appends in flight (pauseBetweenStretches; parts() too, before it reads).
   * @throws the staging area's error, if an append failed
   */
  async settle(): Promise<void> {
    await this.appending
  }

  async *parts(): AsyncIterable<HistoryAccumulator> {
    await this.settle()
    if (!this.spills) {
      yield this.current
      return
    }
    // The last stretch stays in memory, split like the others.
    const last = await this.split(this.current)
    for (let part = 0; part < this.limits.parts; part++) {
      const acc = this.accumulator()
      const chunks = this.spilled.has(part) ? await this.staging.read(part) : []
      for (const chunk of chunks) for (const line of chunk.split('\n')) replay(line, acc)
      for (const line of last.get(part) ?? []) replay(line, acc)
      last.delete(part)
      if (acc.size > 0) yield acc
      if (this.spilled.delete(part)) await this.staging.discard([part])
    }
  }

  /** Drop whatever is staged (after a refusal, or once written). Safe to call twice. */
  async discard(): Promise<void> {
    await this.appending.catch(() => undefined)
    const parts = [...this.spilled]
    this.spilled.clear()
    if (parts.length > 0) await this.staging.discard(parts)
  }

  private accumulator(): HistoryAccumulator {
    return new HistoryAccumulator(this.opts, this.errors)
  }

  private heldBytes(): number {
    return this.current.size * BYTES_PER_SKU + this.current.heldCells * BYTES_PER_CELL
  }

  /**
   * What `acc` holds as text lines per part; empties it. Gives the event loop a
   * turn every SPLIT_SLICE SKUs, so a stretch of tens of thousands of SKUs does
   * not hold up other requests while it is encoded.
   */
  private async split(acc: HistoryAccumulator): Promise<Map<number, string[]>> {
    const lines = new Map<number, string[]>()
    let n = 0
    for (const item of acc.handOver()) {
      const part = partOf(item.sku, this.limits.parts)
      const line = 'series' in item ? `s\t${JSON.stringify([item.sku, item.series, item.origin])}` : `g\t${JSON.stringify([item.sku, item.group])}`
      const list = lines.get(part)
      if (list) list.push(line)
      else lines.set(part, [line])
      if (++n % SPLIT_SLICE === 0) await new Promise<void>((resolve) => setImmediate(resolve))
    }
    return lines
  }

  /**
   * Start afresh and stage what was gathered. The staging runs behind the
   * readers, who wait for it at their next pause (pauseBetweenStretches).
   */
  private spill(): void {
    const full = this.current
    const kinds = full.kinds
    this.spilledKinds = { dated: this.spilledKinds.dated + kinds.dated, period: this.spilledKinds.period + kinds.period }
    const span = full.span
    if (span !== null) {
      this.lo = Math.min(this.lo, span.lo)
      this.hi = Math.max(this.hi, span.hi)
    }
    this.spills = true
    // A fresh accumulator: the old one's kinds and span were counted above.
    this.current = this.accumulator()
    this.appending = this.appending.then(() => this.stage(full))
    // Awaited in settle(); marked handled here so a failed append waits there instead of crashing the process.
    this.appending.catch(() => undefined)
  }

  private async stage(full: HistoryAccumulator): Promise<void> {
    const chunks = new Map<number, string>()
    for (const [part, lines] of await this.split(full)) {
      chunks.set(part, lines.join('\n'))
      if (!this.spilled.has(part)) this.staged++
      this.spilled.add(part)
    }
    await this.staging.append(chunks)
  }
}

/** The part of a SKU: FNV-1a over its UTF-16 units (stable, cheap, spreads similar codes). */
export function partOf(sku: string, parts: number): number {
  let h = 0x811c9dc5
  for (let i = 0; i < sku.length; i++) {
    h ^= sku.charCodeAt(i)
    h = Math.imul(h, 0x01000193)
  }
  return (h >>> 0) % parts
}

/** Feed one staged line back into an accumulator. */
function replay(line: string, acc: HistoryAccumulator): void {
  if (line.startsWith('s\t')) {
    const [sku, incoming, origin] = JSON.parse(line.slice(2)) as [string, IncomingHistory, Origin]
    acc.addSeries(sku, incoming, origin)
  } else {
    const [sku, group] = JSON.parse(line.slice(2)) as [string, GatheredGroup]
    acc.addGroup(sku, group)
  }
}
