import type { RedisClient } from '../redis.js'
import { countOf, StoredValueError } from '../decode.js'

/**
 * Lua scripts of the run store. Each runs atomically on one Redis node; the
 * keys of one script share a run's hash tag (see keys.ts), so they also work on
 * a cluster. Statuses that may still change: 'queued' and 'running'.
 */

/**
 * startChunk. KEYS: run. ARGV: nowIso.
 * Moves a queued run to running (first chunk started). Returns
 * {status, settingsJson, createdAt, moved}, moved '1' when this call did the
 * move (for the stats counters) and '0' otherwise; nil when the run does not exist.
 */
const START_CHUNK = `
local st = redis.call('HGET', KEYS[1], 'status')
if not st then return nil end
local moved = '0'
if st == 'queued' then
  redis.call('HSET', KEYS[1], 'status', 'running', 'startedAt', ARGV[1])
  st = 'running'
  moved = '1'
end
return {st, redis.call('HGET', KEYS[1], 'settings'), redis.call('HGET', KEYS[1], 'createdAt'), moved}
`

/**
 * storeItems. KEYS: run, skus, items. ARGV: resultTtl, then pairs (sku, item).
 * First step of a chunk commit: writes the chunk's items while the run is
 * queued or running. Naturally idempotent (a retry writes the same fields), so
 * it needs no guard; nothing is counted here.
 * Returns {outcome, createdAt}: outcome 'stored' | 'missing' | the run's terminal status.
 */
const STORE_ITEMS = `
local st = redis.call('HGET', KEYS[1], 'status')
if not st then return {'missing', ''} end
local created = redis.call('HGET', KEYS[1], 'createdAt') or ''
if st ~= 'queued' and st ~= 'running' then return {st, created} end
local i = 2
while i < #ARGV do
  redis.call('ZADD', KEYS[2], 0, ARGV[i])
  redis.call('HSET', KEYS[3], ARGV[i], ARGV[i + 1])
  i = i + 2
end
for k = 2, 3 do
  if redis.call('EXISTS', KEYS[k]) == 1 then redis.call('EXPIRE', KEYS[k], tonumber(ARGV[1])) end
end
return {'stored', created}
`

/**
 * commitChunk. KEYS: run, chunks.
 * ARGV: chunkIndex, nowIso, resultTtl, recordTtl, done, failed, errSum, errCount,
 *       nWins, then nWins pairs (model, count).
 * Last step of a chunk commit, after its items are stored (storeItems) and its
 * SKUs' latest-forecast records written: in one atomic step, skip unless the
 * run is queued/running, skip a chunk already counted (a retry never
 * double-counts), add the counts and summary accumulators, decrement the chunks
 * remaining, and finish the run when that reaches zero. So a run reads
 * 'succeeded' only once every SKU's items and latest record are in place.
 * Returns {outcome, statusBefore}: outcome 'committed' | 'finished' | 'duplicate' |
 * 'missing' | the run's terminal status; statusBefore the run's status when the
 * call began ('' when missing), so the caller can count the status change.
 */
const COMMIT_CHUNK = `
local st = redis.call('HGET', KEYS[1], 'status')
if not st then return {'missing', ''} end
if st ~= 'queued' and st ~= 'running' then return {st, st} end
if redis.call('SADD', KEYS[2], ARGV[1]) == 0 then return {'duplicate', st} end
local nWins = tonumber(ARGV[9])
local i = 10
for _ = 1, nWins do
  redis.call('HINCRBY', KEYS[1], 'win:' .. ARGV[i], tonumber(ARGV[i + 1]))
  i = i + 2
end
redis.call('HINCRBY', KEYS[1], 'done', tonumber(ARGV[5]))
redis.call('HINCRBY', KEYS[1], 'failed', tonumber(ARGV[6]))
redis.call('HINCRBYFLOAT', KEYS[1], 'errSum', ARGV[7])
redis.call('HINCRBY', KEYS[1], 'errCount', tonumber(ARGV[8]))
if st == 'queued' then redis.call('HSET', KEYS[1], 'status', 'running', 'startedAt', ARGV[2]) end
redis.call('EXPIRE', KEYS[2], tonumber(ARGV[3]))
local remaining = redis.call('HINCRBY', KEYS[1], 'chunksRemaining', -1)
if remaining <= 0 then
  redis.call('HSET', KEYS[1], 'status', 'succeeded', 'finishedAt', ARGV[2])
  redis.call('EXPIRE', KEYS[1], tonumber(ARGV[4]))
  return {'finished', st}
end
return {'committed', st}
`

/**
 * dropUncounted. KEYS: chunks, skus, items. ARGV: chunkIndex, then the chunk's SKUs.
 * Undoes storeItems for a chunk whose commit found the run cancelled or failed
 * in between (the chunk was not counted): removes its SKUs and items, so a
 * cancelled run holds exactly the results it counted. A chunk counted by an
 * earlier attempt keeps its results. Returns how many items were removed.
 */
const DROP_UNCOUNTED = `
if redis.call('SISMEMBER', KEYS[1], ARGV[1]) == 1 then return 0 end
local removed = 0
for i = 2, #ARGV do
  redis.call('ZREM', KEYS[2], ARGV[i])
  removed = removed + redis.call('HDEL', KEYS[3], ARGV[i])
end
return removed
`

/**
 * endRun. KEYS: run, chunks, skus, items. ARGV: status ('cancelled'|'failed'),
 * nowIso, failure JSON ('' for none), resultTtl, recordTtl.
 * Ends a queued or running run; returns {statusAfter, statusBefore}, or nil
 * when it does not exist. A finished run is left unchanged (both the same).
 */
const END_RUN = `
local st = redis.call('HGET', KEYS[1], 'status')
if not st then return nil end
if st ~= 'queued' and st ~= 'running' then return {st, st} end
redis.call('HSET', KEYS[1], 'status', ARGV[1], 'finishedAt', ARGV[2])
if ARGV[3] ~= '' then redis.call('HSET', KEYS[1], 'failure', ARGV[3]) end
redis.call('EXPIRE', KEYS[1], tonumber(ARGV[5]))
for k = 2, 4 do
  if redis.call('EXISTS', KEYS[k]) == 1 then redis.call('EXPIRE', KEYS[k], tonumber(ARGV[4])) end
end
return {ARGV[1], st}
`

/**
 * updateLatest. KEYS: latest. ARGV: createdAtMs, runId, then pairs (sku, tail).
 * Sets each SKU's record to `createdAtMs|runId|tail` (latest-record.ts) unless a
 * run created later already holds it (a run finishing late never overwrites a
 * newer one). Ties go to the larger run id; a malformed record is replaced.
 * The key never expires (accuracy scoring reads the points after results have).
 * Returns how many records changed.
 */
const UPDATE_LATEST = `
local created = tonumber(ARGV[1])
local prefix = ARGV[1] .. '|' .. ARGV[2] .. '|'
local changed = 0
for i = 3, #ARGV, 2 do
  local cur = redis.call('HGET', KEYS[1], ARGV[i])
  local take = true
  if cur then
    local a = string.find(cur, '|', 1, true)
    local b = a and string.find(cur, '|', a + 1, true)
    local curCreated = b and tonumber(string.sub(cur, 1, a - 1))
    if curCreated then
      local curRun = string.sub(cur, a + 1, b - 1)
      take = curCreated < created or (curCreated == created and curRun <= ARGV[2])
    end
  end
  if take then
    redis.call('HSET', KEYS[1], ARGV[i], prefix .. ARGV[i + 1])
    changed = changed + 1
  end
end
return changed
`

/**
 * pushPublished. KEYS: published. ARGV: keep, createdAtMs, runId, then pairs (sku, tail).
 * Adds `createdAtMs|runId|tail` to each SKU's list of published records (newest
 * first, one per line, ordered as updateLatest orders runs) and keeps the newest
 * `keep`. A run already in the list is not added again (a retried chunk), and a
 * run older than every kept one falls off at once. Returns how many lists changed.
 */
const PUSH_PUBLISHED = `
local keep = tonumber(ARGV[1])
local created = tonumber(ARGV[2])
local runId = ARGV[3]
local head = ARGV[2] .. '|' .. ARGV[3] .. '|'
local changed = 0
for i = 4, #ARGV, 2 do
  local cur = redis.call('HGET', KEYS[1], ARGV[i])
  local recs = {}
  if cur then
    for rec in string.gmatch(cur, '[^\\n]+') do recs[#recs + 1] = rec end
  end
  local pos = #recs + 1
  local dup = false
  for j = #recs, 1, -1 do
    local rec = recs[j]
    local a = string.find(rec, '|', 1, true)
    local b = a and string.find(rec, '|', a + 1, true)
    local c = b and tonumber(string.sub(rec, 1, a - 1))
    local r = b and string.sub(rec, a + 1, b - 1)
    if r == runId then dup = true end
    if c == nil or c < created or (c == created and r < runId) then pos = j end
  end
  if not dup and pos <= keep then
    table.insert(recs, pos, head .. ARGV[i + 1])
    while #recs > keep do table.remove(recs) end
    redis.call('HSET', KEYS[1], ARGV[i], table.concat(recs, '\\n'))
    changed = changed + 1
  end
end
return changed
`

export interface RunScripts {
  /** [status, settingsJson, createdAt, moved ('1' when this call moved queued to running)]. */
  startChunk(run: string, nowIso: string): Promise<[string, string, string, string] | null>
  /** [outcome, the run's createdAt ('' when the run is missing)]. */
  storeItems(keys: readonly [string, string, string], args: readonly (string | number | Buffer)[]): Promise<[string, string]>
  /** [outcome, status before the call ('' when the run is missing)]. */
  commitChunk(keys: readonly [string, string], args: readonly (string | number)[]): Promise<[string, string]>
  /** How many items of an uncounted chunk were removed. */
  dropUncounted(keys: readonly [string, string, string], args: readonly (string | number)[]): Promise<number>
  /** [status after, status before], or null when the run does not exist. */
  endRun(keys: readonly [string, string, string, string], args: readonly (string | number)[]): Promise<[string, string] | null>
  updateLatest(key: string, args: readonly (string | number)[]): Promise<number>
  pushPublished(key: string, args: readonly (string | number)[]): Promise<number>
}

type Call = (...args: (string | number | Buffer)[]) => Promise<unknown>

/**
 * Registers the scripts on a connection (ioredis sends EVALSHA and falls back
 * to EVAL when the script cache is empty) and returns typed callers.
 */
export function defineRunScripts(redis: RedisClient): RunScripts {
  const scripts = {
    almanacStartChunk: [1, START_CHUNK],
    almanacStoreItems: [3, STORE_ITEMS],
    almanacCommitCounts: [2, COMMIT_CHUNK],
    almanacDropUncounted: [3, DROP_UNCOUNTED],
    almanacEndRun: [4, END_RUN],
    almanacUpdateLatest: [1, UPDATE_LATEST],
    almanacPushPublished: [1, PUSH_PUBLISHED],
  } as const
  for (const [name, [numberOfKeys, lua]] of Object.entries(scripts)) {
    if (!(name in redis)) redis.defineCommand(name, { numberOfKeys, lua })
  }
  const cmd = (name: keyof typeof scripts): Call => {
    const fn = (redis as unknown as Record<string, Call | undefined>)[name]
    if (fn === undefined) throw new Error(`Redis script ${name} is not defined on this connection`)
    return fn.bind(redis)
  }
  return {
    startChunk: async (run, nowIso) => {
      const r = await cmd('almanacStartChunk')(run, nowIso)
      return r === null ? null : strings(r, 4, 'almanacStartChunk')
    },
    storeItems: async (keys, args) => strings(await cmd('almanacStoreItems')(...keys, ...args), 2, 'almanacStoreItems'),
    commitChunk: async (keys, args) => strings(await cmd('almanacCommitCounts')(...keys, ...args), 2, 'almanacCommitCounts'),
    dropUncounted: async (keys, args) => countOf(await cmd('almanacDropUncounted')(...keys, ...args), 'almanacDropUncounted reply'),
    endRun: async (keys, args) => {
      const r = await cmd('almanacEndRun')(...keys, ...args)
      return r === null ? null : strings(r, 2, 'almanacEndRun')
    },
    updateLatest: async (key, args) => countOf(await cmd('almanacUpdateLatest')(key, ...args), 'almanacUpdateLatest reply'),
    pushPublished: async (key, args) => countOf(await cmd('almanacPushPublished')(key, ...args), 'almanacPushPublished reply'),
  }
}

/**
 * A script's reply as the `n` strings it returns (Redis hands Lua strings and
 * numbers back as strings or integers).
 * @throws StoredValueError on any other reply.
 */
function strings<N extends 2 | 4>(reply: unknown, n: N, script: string): N extends 2 ? [string, string] : [string, string, string, string] {
  if (!Array.isArray(reply) || reply.length !== n || !reply.every((v) => typeof v === 'string' || typeof v === 'number')) {
    throw new StoredValueError(`${script} replied ${JSON.stringify(reply)?.slice(0, 200)}, not ${n} strings`)
  }
  return reply.map(String) as N extends 2 ? [string, string] : [string, string, string, string]
}
