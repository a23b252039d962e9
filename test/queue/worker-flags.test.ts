import { readFileSync } from 'node:fs'
import { Worker } from 'node:worker_threads'
import { describe, expect, it } from 'vitest'
import { WORKER_NODE_FLAGS, sandboxExecArgv } from '../../src/queue/worker-flags.js'

const root = new URL('../../', import.meta.url)

describe('worker process flags', () => {
  it('are the ones every start command of a worker process uses', () => {
    const pkg = JSON.parse(readFileSync(new URL('package.json', root), 'utf8')) as { scripts: Record<string, string> }
    expect(pkg.scripts.worker).toBe(`node ${WORKER_NODE_FLAGS.join(' ')} dist/worker-main.js`)
    const compose = readFileSync(new URL('docker-compose.yml', root), 'utf8')
    const command = ['node', ...WORKER_NODE_FLAGS, 'dist/worker-main.js'].map((a) => JSON.stringify(a)).join(', ')
    expect(compose).toContain(`command: [${command}]`)
  })

  it('keep module hooks for worker threads and leave out V8 and process-wide options', () => {
    expect(sandboxExecArgv(['--single-threaded', '--import', 'tsx'])).toEqual(['--import', 'tsx'])
    expect(sandboxExecArgv(['--import=tsx', '--max-old-space-size=512', '-r', 'a.cjs', '--conditions', 'dev', '--enable-source-maps'])).toEqual([
      '--import=tsx', '-r', 'a.cjs', '--conditions', 'dev', '--enable-source-maps',
    ])
    expect(sandboxExecArgv(['--inspect=9229', '--cpu-prof', '--cpu-prof-dir', 'prof', '--title', 'w'])).toEqual(['--cpu-prof', '--cpu-prof-dir', 'prof'])
    expect(sandboxExecArgv([])).toEqual([])
  })

  it('give an execArgv that Node accepts for a worker thread, where the unfiltered one is refused', async () => {
    const execArgv = [...WORKER_NODE_FLAGS, '--max-old-space-size=512', '--no-warnings']
    expect(() => new Worker('', { eval: true, execArgv })).toThrow(/execArgv/)
    const worker = new Worker('require("node:worker_threads").parentPort.postMessage(process.execArgv)', { eval: true, execArgv: sandboxExecArgv(execArgv) })
    const seen = await new Promise((resolve, reject) => worker.once('message', resolve).once('error', reject))
    expect(seen).toEqual(['--no-warnings'])
    await worker.terminate()
  })
})
