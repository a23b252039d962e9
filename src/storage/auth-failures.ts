import { createHash } from 'node:crypto'
import type { RedisClient } from './redis.js'

/**
 * Failed authentications per client address, counted in fixed windows.
 * In Redis (`${prefix}:auth-failures:<sha256 of the address>`, one key alone per
 * call, so a cluster accepts it) every API process shares the counts; without
 * Redis they stay in this process's memory.
 */
export interface AuthFailureCounts {
  /** Failures in the address's current window, and ms until that window ends (0 when none). */
  current(address: string): Promise<{ readonly count: number; readonly resetMs: number }>
  /** Count one failure; the first of a window starts it. */
  record(address: string): Promise<void>
}

const READ = `local n = redis.call('GET', KEYS[1]) if not n then return {0, 0} end return {tonumber(n), redis.call('PTTL', KEYS[1])}`
const RECORD = `local n = redis.call('INCR', KEYS[1]) if n == 1 then redis.call('PEXPIRE', KEYS[1], ARGV[1]) end return n`

export class RedisAuthFailureCounts implements AuthFailureCounts {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: { readonly prefix: string; readonly windowMs: number },
  ) {}

  private key(address: string): string {
    return `${this.opts.prefix}:auth-failures:${createHash('sha256').update(address, 'utf8').digest('hex')}`
  }

  async current(address: string): Promise<{ count: number; resetMs: number }> {
    const reply: unknown = await this.redis.eval(READ, 1, this.key(address))
    const [count, ttl] = Array.isArray(reply) ? reply : []
    return { count: typeof count === 'number' ? count : 0, resetMs: typeof ttl === 'number' && ttl > 0 ? ttl : 0 }
  }

  async record(address: string): Promise<void> {
    await this.redis.eval(RECORD, 1, this.key(address), String(this.opts.windowMs))
  }
}

/** Most addresses tracked in memory; the oldest window is dropped past it, so a flood of addresses cannot grow the map. */
const MAX_TRACKED = 10_000

export class MemoryAuthFailureCounts implements AuthFailureCounts {
  private readonly windows = new Map<string, { count: number; endsAt: number }>()

  constructor(
    private readonly windowMs: number,
    private readonly now: () => number = Date.now,
  ) {}

  async current(address: string): Promise<{ count: number; resetMs: number }> {
    const w = this.windows.get(address)
    const left = w === undefined ? 0 : w.endsAt - this.now()
    return left > 0 ? { count: w!.count, resetMs: left } : { count: 0, resetMs: 0 }
  }

  async record(address: string): Promise<void> {
    const w = this.windows.get(address)
    if (w !== undefined && w.endsAt > this.now()) {
      w.count++
      return
    }
    this.windows.delete(address)
    if (this.windows.size >= MAX_TRACKED) this.windows.delete(this.windows.keys().next().value!)
    this.windows.set(address, { count: 1, endsAt: this.now() + this.windowMs })
  }
}
