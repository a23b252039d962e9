import type { RedisClient } from './redis.js'

/**
 * Requests per rate-limit key (a tenant, or an address before auth), counted
 * in fixed windows, with a refund for answers that should not have counted
 * (a 304 to a poll). In Redis (`<namespace><key>`, one key per call, so a
 * cluster accepts it) every API process shares the counts; without Redis they
 * stay in this process's memory. The shape of `incr` is the store interface of
 * @fastify/rate-limit.
 */
export interface RequestCounts {
  incr(key: string, done: (err: Error | null, result?: { current: number; ttl: number }) => void, windowMs: number): void
  /** Take one request back from the key's current window (never below 0; nothing when the window has ended). */
  refund(key: string): Promise<void>
  /** The rate-limit plugin asks for a store per route with its own limits; this service has none, so the same counts. */
  child(): RequestCounts
}

const INCR = `local n = redis.call('INCR', KEYS[1])
if n == 1 then redis.call('PEXPIRE', KEYS[1], ARGV[1]) return {n, tonumber(ARGV[1])} end
return {n, redis.call('PTTL', KEYS[1])}`
const REFUND = `local n = tonumber(redis.call('GET', KEYS[1]) or '0')
if n > 0 then return redis.call('DECR', KEYS[1]) end
return 0`

export class RedisRequestCounts implements RequestCounts {
  constructor(
    private readonly redis: RedisClient,
    private readonly namespace: string,
  ) {}

  incr(key: string, done: (err: Error | null, result?: { current: number; ttl: number }) => void, windowMs: number): void {
    this.redis.eval(INCR, 1, this.namespace + key, String(windowMs)).then(
      (reply: unknown) => {
        const [current, ttl] = Array.isArray(reply) ? reply : []
        if (typeof current !== 'number') return done(new Error('unexpected reply from the request counter'))
        done(null, { current, ttl: typeof ttl === 'number' && ttl > 0 ? ttl : windowMs })
      },
      (err: Error) => done(err),
    )
  }

  async refund(key: string): Promise<void> {
    await this.redis.eval(REFUND, 1, this.namespace + key)
  }

  child(): RequestCounts {
    return this
  }
}

/** Most keys tracked in memory; the oldest window is dropped past it, so a flood of addresses cannot grow the map. */
const MAX_TRACKED = 10_000

export class MemoryRequestCounts implements RequestCounts {
  private readonly windows = new Map<string, { count: number; endsAt: number }>()

  constructor(private readonly now: () => number = Date.now) {}

  incr(key: string, done: (err: Error | null, result?: { current: number; ttl: number }) => void, windowMs: number): void {
    const at = this.now()
    let w = this.windows.get(key)
    if (w === undefined || w.endsAt <= at) {
      this.windows.delete(key)
      if (this.windows.size >= MAX_TRACKED) this.windows.delete(this.windows.keys().next().value!)
      w = { count: 0, endsAt: at + windowMs }
      this.windows.set(key, w)
    }
    w.count++
    done(null, { current: w.count, ttl: w.endsAt - at })
  }

  async refund(key: string): Promise<void> {
    const w = this.windows.get(key)
    if (w !== undefined && w.endsAt > this.now() && w.count > 0) w.count--
  }

  child(): RequestCounts {
    return this
  }
}
