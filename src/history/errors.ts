import { MAX_LISTED_ERRORS, type UploadError } from './types.js'

/** Collects rejected rows: the first `max` are listed, the rest only counted. */
export class ErrorCollector {
  readonly listed: UploadError[] = []
  notListed = 0
  /** Rows (CSV lines, NDJSON lines, JSON series) rejected so far. */
  rejectedRows = 0

  constructor(private readonly max = MAX_LISTED_ERRORS) {}

  /** Record a rejection covering `rows` input rows (0 for a note about rows already counted). */
  add(error: UploadError, rows = 1): void {
    this.rejectedRows += rows
    if (this.listed.length < this.max) this.listed.push(error)
    else this.notListed++
  }
}
