import type { RedisClient } from '../redis.js'
import { countOf } from '../decode.js'

/** Highest job priority BullMQ accepts (lower numbers are served first). */
export const MAX_CHUNK_PRIORITY = 2_097_152

/**
 * reserve. KEYS: fair-share hash. ARGV: tenant, chunks, reset ('1': the queue holds no waiting chunk).
 * Start-time fair queuing over BullMQ priorities: field `v` is the priority of
 * the latest chunk a worker started (the queue's virtual clock), `t:<tenant>`
 * the last priority handed to that tenant. A run's chunks get priorities
 * start+1..start+n, start = max(v, the tenant's last): a tenant with much
 * queued waits behind its own earlier chunks, while a newcomer starts at the
 * clock, so chunks of busy tenants interleave one for one. With nothing
 * waiting the numbers start again from zero, which keeps them far below
 * BullMQ's ceiling in practice.
 */
const RESERVE = `
if ARGV[3] == '1' then redis.call('DEL', KEYS[1]) end
local v = tonumber(redis.call('HGET', KEYS[1], 'v') or '0')
local f = tonumber(redis.call('HGET', KEYS[1], 't:' .. ARGV[1]) or '0')
local start = math.max(v, f)
redis.call('HSET', KEYS[1], 't:' .. ARGV[1], start + tonumber(ARGV[2]))
return start
`

/** started. KEYS: fair-share hash. ARGV: priority of a chunk a worker just started. Moves the clock forward only. */
const STARTED = `
local v = tonumber(redis.call('HGET', KEYS[1], 'v') or '0')
if tonumber(ARGV[1]) > v then redis.call('HSET', KEYS[1], 'v', ARGV[1]) end
return 0
`

/**
 * Chunk priorities that share workers fairly between tenants (issue 14,
 * finding 10): one hash beside the chunk queue's keys (a single key, so it
 * works on a cluster too), per queue.
 */
export class FairShare {
  private readonly key: string
  /** One per queue: `queueName` keeps the numbers of two queues apart. */
  constructor(
    private readonly redis: RedisClient,
    queuePrefix: string,
    queueName: string,
  ) {
    this.key = `${queuePrefix}:${queueName}:fair-share`
  }

  /**
   * Priorities for a run's `chunks` chunks, in chunk order. `queueIdle`: no
   * chunk is waiting, so the numbering may start again. Past BullMQ's ceiling
   * the priorities stay at it (first come, first served among those).
   */
  async reserve(tenant: string, chunks: number, queueIdle: boolean): Promise<number[]> {
    const start = countOf(await this.redis.eval(RESERVE, 1, this.key, tenant, String(chunks), queueIdle ? '1' : '0'), 'fair-share start')
    return Array.from({ length: chunks }, (_, i) => Math.min(start + i + 1, MAX_CHUNK_PRIORITY))
  }

  /** Records that a worker started a chunk of this priority. */
  async started(priority: number): Promise<void> {
    if (priority > 0) await this.redis.eval(STARTED, 1, this.key, String(priority))
  }
}
