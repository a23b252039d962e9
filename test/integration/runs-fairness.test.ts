import { afterEach, describe, expect, it } from 'vitest'
import type { Config } from '../../src/config.js'
import { createLogger } from '../../src/logger.js'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import type { RunRecord } from '../../src/runs/contract.js'
import { startProcessWorkers, type ProcessWorkers } from '../../src/worker-main.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, runsTestConfig, syntheticSeries, waitFor } from '../queue/fixtures.js'

// Issue 14, finding 10: tenant A's large run delayed tenant B's 6-point run until A's was done,
// because chunks were served first come, first served. Demand values are invented (machinery only).
let url: string
let prefix: string
let gateway: RunMachinery | undefined
let workers: ProcessWorkers | undefined

async function start(overrides: Partial<Config>): Promise<RunMachinery> {
  url = await redisUrlForTests()
  prefix = uniquePrefix('runs-fairness')
  const config = runsTestConfig(url, prefix, overrides)
  gateway = createRunGateway(config, { logger: createLogger({ level: 'silent' }) })
  workers = startProcessWorkers(config, createLogger({ level: 'silent' }))
  return gateway
}

afterEach(async () => {
  await workers?.close()
  await gateway?.close()
  if (url && prefix) await deleteKeys(url, prefix)
})

const ended = (r: RunRecord | null) => r !== null && r.status !== 'queued' && r.status !== 'running'
const SMALL = [{ sku: 'HEAT-1', demand: [4, 6, 5, 7, 6, 8] }]

async function untilEnded(g: RunMachinery, tenant: string, id: string, what: string): Promise<RunRecord> {
  return waitFor(async () => {
    const r = await g.get(tenant, id)
    return ended(r) ? r! : undefined
  }, 150_000, what)
}

describe('fair sharing of workers between tenants', { timeout: 240_000 }, () => {
  it("chunk priorities: a small tenant's run finishes while a large one is still fitting (seen failing before the fix)", async () => {
    // One lane, one chunk at a time, one series per chunk: the order in which chunks are served is all that decides.
    const g = await start({ chunkSize: 1, workerConcurrency: 1, expressMaxSeries: 0 })
    const large = await g.submit('garden', runRequest(syntheticSeries(40, 48, 'GARDEN')))
    // Wait until the large run is being fitted, so its chunks are ahead in the queue.
    await waitFor(async () => ((await g.get('garden', large.id))?.progress.done ?? 0) >= 1 || undefined, 60_000, 'large run to start')
    const small = await g.submit('heating', runRequest(SMALL))
    const smallDone = await untilEnded(g, 'heating', small.id, 'small run to finish')
    const largeNow = await g.get('garden', large.id)
    expect(smallDone.status).toBe('succeeded')
    expect(largeNow?.status).toBe('running')
    expect(largeNow!.progress.done).toBeLessThan(40)
    const largeDone = await untilEnded(g, 'garden', large.id, 'large run to finish')
    expect(largeDone.status).toBe('succeeded')
    expect(largeDone.progress.done).toBe(40)
  })

  it('express lane: a small run does not wait for the large chunk that holds the only main thread', async () => {
    // One main thread, busy with 20-series chunks of long series; the small run has a thread of its own.
    const g = await start({ chunkSize: 20, workerConcurrency: 1, expressMaxSeries: 5 })
    // Starting a thread under the test's TypeScript loader takes seconds; the service keeps it once started.
    const warmUp = await g.submit('heating', runRequest(SMALL))
    expect((await untilEnded(g, 'heating', warmUp.id, 'warm-up run')).status).toBe('succeeded')
    const large = await g.submit('garden', runRequest(syntheticSeries(60, 144, 'GARDEN'), { holdoutOrigins: 4, horizon: 12 }))
    await waitFor(async () => ((await g.get('garden', large.id))?.status === 'running' ? true : undefined), 60_000, 'large run to start')
    const small = await g.submit('heating', runRequest(SMALL))
    const smallDone = await untilEnded(g, 'heating', small.id, 'small run to finish')
    const largeNow = await g.get('garden', large.id)
    expect(smallDone.status).toBe('succeeded')
    // Not even the large run's first chunk was done: the small run did not queue behind it.
    expect(largeNow?.progress.done).toBe(0)
    expect(await g.cancel('garden', large.id)).toMatchObject({ status: 'cancelled' })
  })
})
