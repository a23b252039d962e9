import Tinypool from 'tinypool'
import type { RunBodyOutcome, RunBodyTask } from './run-body-thread.js'

/** Bodies of at least this many bytes are parsed on a thread by the routes that opt in (`largeJsonOnThread`). */
export const LARGE_JSON_BYTES = 1024 * 1024

/** A JSON body left unparsed by the API's parser, as its bytes in blocks (read-blocks.ts), for a pool thread (routes with `largeJsonOnThread`). */
export class LargeJsonBody {
  constructor(readonly blocks: readonly Buffer[]) {}
}

/** Parses and prepares large request bodies off the event loop. */
export interface BodyThreads {
  /** The body's blocks move to the thread (transferred when they own their memory): do not read them afterwards. */
  prepareRun(task: RunBodyTask): Promise<RunBodyOutcome>
  close(): Promise<void>
}

function taskFile(): URL {
  return import.meta.url.endsWith('.ts') ? new URL('./run-body-thread-entry.mjs', import.meta.url) : new URL('./run-body-thread.js', import.meta.url)
}

/**
 * One thread at most: a large body waits for the one before it rather than take
 * a second core from the workers. The thread starts with a large body and ends a
 * second after the last one, so the few hundred MiB of objects a 64 MiB body
 * parses into leave the process with it (bench:abuse: a thread kept for a minute
 * still held them when a large CSV upload came next). Its heap is bounded well
 * above what the body limit lets through.
 */
export function createBodyThreads(): BodyThreads {
  const pool = new Tinypool({
    filename: taskFile().href,
    minThreads: 0,
    maxThreads: 1,
    idleTimeout: 1_000,
    resourceLimits: { maxOldGenerationSizeMb: 1536, maxYoungGenerationSizeMb: 64 },
  })
  return {
    prepareRun: (task) => {
      // Each block is handed over without a copy when it owns its whole buffer (a block of read-blocks.ts
      // does), so the event loop does not copy tens of megabytes; a view into a shared buffer is copied.
      const owned = task.blocks.filter((b) => b.byteOffset === 0 && b.byteLength === b.buffer.byteLength && b.buffer instanceof ArrayBuffer)
      const transferList = owned.map((b) => b.buffer as ArrayBuffer)
      return pool.run(task, transferList.length > 0 ? { transferList } : {}) as Promise<RunBodyOutcome>
    },
    close: () => pool.destroy(),
  }
}
