import { afterAll, beforeAll, describe, expect, it } from 'vitest'
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
let gateway: RunMachinery
let workers: ProcessWorkers

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('runs-fairness')
  // One chunk at a time and one series per chunk: the order in which chunks are served is all that decides.
  const config = runsTestConfig(url, prefix, { chunkSize: 1, workerConcurrency: 1 })
  gateway = createRunGateway(config, { logger: createLogger({ level: 'silent' }) })
  workers = startProcessWorkers(config, createLogger({ level: 'silent' }))
})

afterAll(async () => {
  await workers?.close()
  await gateway?.close()
  if (url && prefix) await deleteKeys(url, prefix)
})

const ended = (r: RunRecord | null) => r !== null && r.status !== 'queued' && r.status !== 'running'

describe('fair sharing of workers between tenants', { timeout: 180_000 }, () => {
  it("a small tenant's run finishes while a large one is still fitting (seen failing before the fix)", async () => {
    const large = await gateway.submit('garden', runRequest(syntheticSeries(40, 48, 'GARDEN')))
    // Wait until the large run is being fitted, so its chunks are ahead in the queue.
    await waitFor(async () => ((await gateway.get('garden', large.id))?.progress.done ?? 0) >= 1 || undefined, 60_000, 'large run to start')
    const small = await gateway.submit('heating', runRequest([{ sku: 'HEAT-1', demand: [4, 6, 5, 7, 6, 8] }]))
    const smallDone = await waitFor(async () => {
      const r = await gateway.get('heating', small.id)
      return ended(r) ? r : undefined
    }, 120_000, 'small run to finish')
    const largeNow = await gateway.get('garden', large.id)
    expect(smallDone?.status).toBe('succeeded')
    expect(largeNow?.status).toBe('running')
    expect(largeNow!.progress.done).toBeLessThan(40)
    // The large run still completes.
    const largeDone = await waitFor(async () => {
      const r = await gateway.get('garden', large.id)
      return ended(r) ? r : undefined
    }, 150_000, 'large run to finish')
    expect(largeDone?.status).toBe('succeeded')
    expect(largeDone?.progress.done).toBe(40)
  })
})
