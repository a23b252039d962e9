import type { RedisClient } from '../redis.js'
import { FREQUENCIES, formatPeriod, parsePeriod, type Frequency } from '../../engine/index.js'
import { isValidTenant } from '../keys.js'

/**
 * A tenant's closed-through period per frequency:
 *
 *   closed   hash  frequency -> `${ordinal}|${label}`   under `${prefix}:t:${tenant}:`, no TTL
 *
 * Periods up to it are closed (complete: fitted and scored); later ones are
 * open. A frequency without a field has never been closed: all its stored
 * periods count as closed. The period only moves forward (the script compares
 * ordinals), so two concurrent closes cannot move it back.
 */

/** KEYS: closed. ARGV: frequency, ordinal, label. Returns {outcome, previous value or ''}. */
const CLOSE = `
local cur = redis.call('HGET', KEYS[1], ARGV[1])
if cur then
  local bar = string.find(cur, '|', 1, true)
  local ordinal = bar and tonumber(string.sub(cur, 1, bar - 1))
  if ordinal and ordinal > tonumber(ARGV[2]) then return {'behind', cur} end
  if ordinal and ordinal == tonumber(ARGV[2]) then return {'unchanged', cur} end
end
redis.call('HSET', KEYS[1], ARGV[1], ARGV[2] .. '|' .. ARGV[3])
return {'moved', cur or ''}
`
const COMMAND = 'almanacClosePeriod'

export type ClosedPeriods = Partial<Record<Frequency, string>>
export type ClosedOrdinals = Partial<Record<Frequency, number>>

export interface CloseOutcome {
  /** moved: the period moved forward; unchanged: it was already closed through it; behind: a later period is closed. */
  readonly outcome: 'moved' | 'unchanged' | 'behind'
  /** The closed-through period before the call (null: none). */
  readonly previous: string | null
}

export class ClosingStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly prefix: string,
  ) {
    if (!(COMMAND in redis)) redis.defineCommand(COMMAND, { numberOfKeys: 1, lua: CLOSE })
  }

  private key(tenant: string): string {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    return `${this.prefix}:t:${tenant}:closed`
  }

  /** Closed-through ordinal per frequency; a value that does not decode is left out (as never closed). */
  async ordinals(tenant: string): Promise<ClosedOrdinals> {
    if (!isValidTenant(tenant)) return {}
    const h = await this.redis.hgetall(this.key(tenant))
    const out: ClosedOrdinals = {}
    for (const f of FREQUENCIES) {
      const ordinal = decodeOrdinal(h[f], f)
      if (ordinal !== null) out[f] = ordinal
    }
    return out
  }

  /** Closed-through label per frequency. */
  async labels(tenant: string): Promise<ClosedPeriods> {
    const ordinals = await this.ordinals(tenant)
    const out: ClosedPeriods = {}
    for (const f of FREQUENCIES) if (ordinals[f] !== undefined) out[f] = formatPeriod(ordinals[f], f)
    return out
  }

  /**
   * Closes every period of the frequency through `period` (a label the caller has parsed).
   * @throws Error when the label is not a period of the frequency.
   */
  async close(tenant: string, frequency: Frequency, period: string): Promise<CloseOutcome> {
    const ordinal = parsePeriod(period, frequency)
    const label = formatPeriod(ordinal, frequency)
    const run = (this.redis as unknown as Record<string, (...a: (string | number)[]) => Promise<unknown>>)[COMMAND]!
    const reply = await run.call(this.redis, this.key(tenant), frequency, ordinal, label)
    if (!Array.isArray(reply) || reply.length !== 2) throw new Error(`${COMMAND} replied ${JSON.stringify(reply)}`)
    const [outcome, previous] = reply.map(String) as [string, string]
    if (outcome !== 'moved' && outcome !== 'unchanged' && outcome !== 'behind') throw new Error(`${COMMAND} replied ${outcome}`)
    const prevOrdinal = decodeOrdinal(previous, frequency)
    return { outcome, previous: prevOrdinal === null ? null : formatPeriod(prevOrdinal, frequency) }
  }
}

function decodeOrdinal(value: string | undefined, frequency: Frequency): number | null {
  if (value === undefined || value === '') return null
  const bar = value.indexOf('|')
  const ordinal = Number(value.slice(0, bar))
  if (bar < 0 || !Number.isInteger(ordinal)) return null
  try {
    return parsePeriod(value.slice(bar + 1), frequency) === ordinal ? ordinal : null
  } catch {
    return null
  }
}
