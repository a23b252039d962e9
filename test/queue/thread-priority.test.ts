import { getPriority } from 'node:os'
import { fileURLToPath } from 'node:url'
import { Worker } from 'node:worker_threads'
import { describe, expect, it } from 'vitest'

// Runs in a worker thread of its own so the test runner's thread keeps its priority.
function inThread(): Promise<{ lowered: boolean; thread: number; tid: number }> {
  const code = `
    const { parentPort } = require('node:worker_threads')
    const { readlinkSync } = require('node:fs')
    const { getPriority } = require('node:os')
    require('tsx/cjs/api').register()
    const m = require(${JSON.stringify(fileURLToPath(new URL('../../src/queue/thread-priority.ts', import.meta.url)))})
    const lowered = m.lowerThreadPriority(7)
    const tid = Number(readlinkSync('/proc/thread-self').split('/').pop())
    parentPort.postMessage({ lowered, thread: getPriority(tid), tid })
  `
  return new Promise((resolve, reject) => {
    const w = new Worker(code, { eval: true })
    w.once('message', (m) => {
      void w.terminate()
      resolve(m)
    })
    w.once('error', reject)
  })
}

describe('lowerThreadPriority', () => {
  it.runIf(process.platform === 'linux' && getPriority(process.pid) < 7)('lowers the calling thread only', async () => {
    const before = getPriority(process.pid)
    const r = await inThread()
    expect(r.lowered).toBe(true)
    expect(r.thread).toBe(7)
    expect(getPriority(process.pid)).toBe(before)
  })
})
