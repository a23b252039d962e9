import { MAX_ABS_VALUE, MAX_POINTS_PER_SERIES } from '../schemas/run.js'
import type { Frequency } from '../engine/index.js'
import { ErrorCollector } from './errors.js'
import { normaliseTags } from './tags.js'
import type { DuplicatePolicy, IncomingHistory, Origin } from './types.js'

interface RowGroup {
  /** Bucket ordinal -> demand so far. */
  readonly cells: Map<number, number>
  rows: number
  readonly firstLine: number | undefined
  /** Tags the SKU's rows carried (a tags column or field); null when none of its rows carried any. */
  tags: Set<string> | null
}

interface SeriesEntry {
  readonly incoming: IncomingHistory
  readonly origin: Origin
}

/** A SKU's rows as gathered so far: bucket ordinal and demand pairs, flattened, in the order first seen. */
export interface GatheredGroup {
  readonly cells: readonly number[]
  readonly rows: number
  readonly firstLine: number | undefined
  /** null: none of the rows carried tags. */
  readonly tags: readonly string[] | null
}

/** What one SKU of an upload brings, ready to merge with the stored history. */
export interface PendingHistory {
  readonly sku: string
  readonly incoming: IncomingHistory
  /** Input rows behind it (for accepted/rejected counts). */
  readonly rows: number
  readonly origin: Origin
}

/**
 * Gathers an upload per SKU. Long-layout rows (sku, period, demand) are
 * summed into buckets of one frequency (`duplicates: 'sum'`) or the last row of
 * a bucket wins (`'last'`); whole series are kept as given. Memory grows with
 * the distinct SKU-buckets of the upload, not with its size in bytes.
 * Rows may carry tags: a SKU's tags become all the tags of its rows.
 * A SKU comes either as one series or as rows; a conflicting later item is rejected.
 */
export class HistoryAccumulator {
  private readonly rowGroups = new Map<string, RowGroup>()
  private readonly seriesBySku = new Map<string, SeriesEntry>()
  /** Accepted rows whose period was a date (transactions) / a period label (period totals); series count as period rows. */
  private rowKinds = { dated: 0, period: 0 }
  /** SKU-periods held: row buckets plus series points (what memory grows with). */
  private cells = 0
  /** Lowest and highest bucket ordinal of everything accepted so far. */
  private lo = Infinity
  private hi = -Infinity

  constructor(
    private readonly opts: { readonly frequency: Frequency; readonly duplicates: DuplicatePolicy },
    readonly errors: ErrorCollector = new ErrorCollector(),
  ) {}

  get frequency(): Frequency {
    return this.opts.frequency
  }

  /** What kinds of rows were accepted: dated transaction rows and/or period rows (series included). */
  get kinds(): { readonly dated: number; readonly period: number } {
    return { ...this.rowKinds }
  }

  /** The lowest and highest period ordinal accepted so far; null when nothing was accepted. */
  get span(): { readonly lo: number; readonly hi: number } | null {
    return this.lo <= this.hi ? { lo: this.lo, hi: this.hi } : null
  }

  private widen(lo: number, hi: number): void {
    if (lo < this.lo) this.lo = lo
    if (hi > this.hi) this.hi = hi
  }

  /**
   * One long-layout row. `tags` (already validated): the row's tags, added to
   * the SKU's; a SKU whose rows carry none keeps its stored tags.
   */
  addRow(sku: string, ordinal: number, demand: number, origin: Origin, dated = false, tags?: readonly string[]): void {
    const series = this.seriesBySku.get(sku)
    if (series) {
      this.errors.add({ ...origin, sku, reason: `SKU was already given as a whole series${where(series.origin)}` })
      return
    }
    let group = this.rowGroups.get(sku)
    if (!group) {
      group = { cells: new Map(), rows: 0, firstLine: origin.line, tags: null }
      this.rowGroups.set(sku, group)
    }
    const before = group.cells.get(ordinal)
    if (before === undefined) this.cells++
    group.cells.set(ordinal, this.opts.duplicates === 'sum' && before !== undefined ? before + demand : demand)
    group.rows++
    if (tags !== undefined && tags.length > 0) {
      group.tags ??= new Set()
      for (const tag of tags) group.tags.add(tag)
    }
    if (dated) this.rowKinds.dated++
    else this.rowKinds.period++
    this.widen(ordinal, ordinal)
  }

  addSeries(sku: string, incoming: IncomingHistory, origin: Origin): void {
    const earlier = this.seriesBySku.get(sku)
    if (earlier || this.rowGroups.has(sku)) {
      const reason = earlier ? `SKU was already given as a series${where(earlier.origin)}` : 'SKU was already given as rows'
      this.errors.add({ ...origin, sku, reason })
      return
    }
    this.seriesBySku.set(sku, { incoming, origin })
    this.cells += incoming.demand.length
    this.rowKinds.period++
    this.widen(incoming.startOrdinal, incoming.startOrdinal + incoming.demand.length - 1)
  }

  /**
   * Rows gathered elsewhere for one SKU (a staged upload's earlier stretch of
   * the file, see staged-upload.ts), merged as if its rows came again: buckets
   * summed or replaced by the duplicate policy, tags added, rows counted. A SKU
   * already given as a series refuses the whole group as one error at its first line.
   */
  addGroup(sku: string, group: GatheredGroup): void {
    const origin: Origin = group.firstLine === undefined ? {} : { line: group.firstLine }
    const series = this.seriesBySku.get(sku)
    if (series) {
      this.errors.add({ ...origin, sku, reason: `SKU was already given as a whole series${where(series.origin)}` }, group.rows)
      return
    }
    let mine = this.rowGroups.get(sku)
    if (!mine) {
      mine = { cells: new Map(), rows: 0, firstLine: group.firstLine, tags: null }
      this.rowGroups.set(sku, mine)
    }
    for (let i = 0; i < group.cells.length; i += 2) {
      const ordinal = group.cells[i]!
      const demand = group.cells[i + 1]!
      const before = mine.cells.get(ordinal)
      if (before === undefined) this.cells++
      mine.cells.set(ordinal, this.opts.duplicates === 'sum' && before !== undefined ? before + demand : demand)
      this.widen(ordinal, ordinal)
    }
    mine.rows += group.rows
    if (group.tags !== null) {
      mine.tags ??= new Set()
      for (const tag of group.tags) mine.tags.add(tag)
    }
  }

  /**
   * Hand over everything gathered, as it stands (no checks: `drain` makes them
   * once every part of a SKU is together), and start empty. Errors, kinds and
   * span stay.
   */
  *handOver(): Generator<{ sku: string } & ({ series: IncomingHistory; origin: Origin } | { group: GatheredGroup })> {
    for (const [sku, entry] of this.seriesBySku) yield { sku, series: entry.incoming, origin: entry.origin }
    for (const [sku, g] of this.rowGroups) {
      const cells: number[] = []
      for (const [ordinal, demand] of g.cells) cells.push(ordinal, demand)
      yield { sku, group: { cells, rows: g.rows, firstLine: g.firstLine, tags: g.tags === null ? null : [...g.tags] } }
    }
    this.rowGroups.clear()
    this.seriesBySku.clear()
    this.cells = 0
  }

  /** How the SKU came so far: as rows, as a series, or not at all. */
  holds(sku: string): 'rows' | 'series' | null {
    if (this.seriesBySku.has(sku)) return 'series'
    return this.rowGroups.has(sku) ? 'rows' : null
  }

  /** SKU-periods held now (row buckets plus series points). */
  get heldCells(): number {
    return this.cells
  }

  /** The whole upload as one part (GatheredUpload): an accumulator holds every SKU in memory. */
  async *parts(): AsyncIterable<HistoryAccumulator> {
    yield this
  }

  /** SKUs gathered so far. */
  get size(): number {
    return this.rowGroups.size + this.seriesBySku.size
  }

  /**
   * Every SKU's incoming data. Buckets between a SKU's first and last row
   * without rows become 0 (no recorded demand). A SKU whose rows span more
   * than MAX_POINTS_PER_SERIES buckets, or whose bucket total exceeds
   * MAX_ABS_VALUE in size, is rejected (its rows counted as rejected).
   */
  *drain(): Generator<PendingHistory> {
    for (const [sku, entry] of this.seriesBySku) yield { sku, incoming: entry.incoming, rows: 1, origin: entry.origin }
    for (const [sku, group] of this.rowGroups) {
      let lo = Infinity
      let hi = -Infinity
      for (const ordinal of group.cells.keys()) {
        if (ordinal < lo) lo = ordinal
        if (ordinal > hi) hi = ordinal
      }
      const span = hi - lo + 1
      const origin: Origin = group.firstLine === undefined ? {} : { line: group.firstLine }
      if (span > MAX_POINTS_PER_SERIES) {
        this.errors.add(
          { ...origin, sku, reason: `rows span ${span} ${this.opts.frequency} periods; a history holds at most ${MAX_POINTS_PER_SERIES}` },
          group.rows,
        )
        continue
      }
      const demand = new Array<number>(span).fill(0)
      let tooLarge = false
      for (const [ordinal, total] of group.cells) {
        demand[ordinal - lo] = total
        if (Math.abs(total) > MAX_ABS_VALUE) tooLarge = true
      }
      if (tooLarge) {
        // Each row is within range, but their sum in a bucket is not: runs would refuse the stored history.
        this.errors.add({ ...origin, sku, reason: `a ${this.opts.frequency} total is larger than ${MAX_ABS_VALUE} in size` }, group.rows)
        continue
      }
      let tags: string[] | undefined
      if (group.tags !== null) {
        const t = normaliseTags([...group.tags])
        if ('reason' in t) {
          this.errors.add({ ...origin, sku, column: 'tags', reason: `the rows' tags together: ${t.reason}` }, group.rows)
          continue
        }
        tags = t.tags
      }
      const incoming = { frequency: this.opts.frequency, startOrdinal: lo, demand, ...(tags === undefined ? {} : { tags }) }
      yield { sku, incoming, rows: group.rows, origin }
    }
    this.rowGroups.clear()
    this.seriesBySku.clear()
    this.cells = 0
  }
}

function where(origin: Origin): string {
  if (origin.line !== undefined) return ` on line ${origin.line}`
  if (origin.item !== undefined) return ` as series[${origin.item}]`
  return ''
}
