/**
 * Node and V8 flags of a worker process (`npm run worker`, docker-compose's
 * worker service, the benchmarks and the worker process tests all start it
 * with these; test/queue/worker-flags.test.ts keeps the start commands in step).
 *
 * `--single-threaded`: V8 does its garbage collection and optimising
 * compilation on the thread that runs the JavaScript instead of on helper
 * threads. A worker process is CPU-bound and runs one fitting thread per core,
 * so the helpers never had an idle core to use: they competed with the fitting
 * threads and added their own coordination: bench:e2e showed less worker
 * CPU and a shorter run with the flag (bench/RESULTS.md, "End to end"). The
 * API process keeps V8's defaults: its garbage
 * collection pauses would delay requests.
 */
export const WORKER_NODE_FLAGS: readonly string[] = ['--single-threaded']

/**
 * The execArgv for the worker threads BullMQ starts (it passes the process's
 * own execArgv by default): Node refuses to start a worker thread whose
 * execArgv holds a V8 or process-wide option such as `--single-threaded` or
 * `--max-old-space-size` (V8 options apply to every thread of the process
 * anyway). Only the options that make a thread load code as the process does
 * are kept: module hooks (`--import`, `--require`, `--loader`,
 * `--experimental-loader`), `--conditions`, `--enable-source-maps`,
 * `--no-warnings`, and the per-thread profilers (`--cpu-prof*`,
 * `--heap-prof*`, which bench:e2e --cpu-prof uses), with their values.
 * Everything else, including `--inspect*`, is left out.
 */
export function sandboxExecArgv(execArgv: readonly string[]): string[] {
  const kept: string[] = []
  for (let i = 0; i < execArgv.length; i++) {
    const arg = execArgv[i]!
    const name = arg.split('=')[0]!
    if (WITH_VALUE.has(name)) {
      kept.push(arg)
      if (!arg.includes('=') && i + 1 < execArgv.length) kept.push(execArgv[++i]!)
    } else if (BARE.has(arg)) kept.push(arg)
  }
  return kept
}

const WITH_VALUE = new Set([
  '--import', '--require', '-r', '--loader', '--experimental-loader', '--conditions', '-C',
  '--cpu-prof-dir', '--cpu-prof-name', '--cpu-prof-interval', '--heap-prof-dir', '--heap-prof-name', '--heap-prof-interval',
])
const BARE = new Set(['--enable-source-maps', '--no-warnings', '--cpu-prof', '--heap-prof'])
