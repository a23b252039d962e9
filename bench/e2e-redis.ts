/**
 * Redis side of the end-to-end benchmarks: memory figures and removal of every
 * key under the benchmark's own prefix.
 */
import type { Redis } from 'ioredis'
import { latestKey, runKeys } from '../src/storage/keys.js'

/** INFO memory used_memory, in bytes. */
export async function usedMemory(redis: Redis): Promise<number> {
  const info = await redis.info('memory')
  const value = /used_memory:(\d+)/.exec(info)?.[1]
  if (value === undefined) throw new Error('INFO memory has no used_memory')
  return Number(value)
}

/** INFO cpu used_cpu_user + used_cpu_sys of the Redis server, in seconds. */
export async function redisCpuSeconds(redis: Redis): Promise<number> {
  const info = await redis.info('cpu')
  const user = Number(/used_cpu_user:([\d.]+)/.exec(info)?.[1] ?? NaN)
  const sys = Number(/used_cpu_sys:([\d.]+)/.exec(info)?.[1] ?? NaN)
  return user + sys
}

/** MEMORY USAGE (all samples) of a run's stored results: the items hash and the SKU index. */
export async function runResultBytes(redis: Redis, prefix: string, tenant: string, runId: string): Promise<number> {
  const k = runKeys(prefix, tenant, runId)
  const items = Number((await redis.memory('USAGE', k.items, 'SAMPLES', 0)) ?? 0)
  const skus = Number((await redis.memory('USAGE', k.skus, 'SAMPLES', 0)) ?? 0)
  return items + skus
}

/** MEMORY USAGE of the tenant's latest-forecast index (one field per SKU). */
export async function latestIndexBytes(redis: Redis, prefix: string, tenant: string): Promise<number> {
  return Number((await redis.memory('USAGE', latestKey(prefix, tenant), 'SAMPLES', 0)) ?? 0)
}

/** Median stored length (HSTRLEN) of up to `count` random result items of a run. */
export async function medianItemBytes(redis: Redis, prefix: string, tenant: string, runId: string, count = 200): Promise<number> {
  const k = runKeys(prefix, tenant, runId)
  const fields = (await redis.hrandfield(k.items, count)) as string[]
  const lengths = await Promise.all(fields.map((f) => redis.hstrlen(k.items, f)))
  lengths.sort((a, b) => a - b)
  return lengths[Math.floor(lengths.length / 2)] ?? 0
}

/** UNLINKs every key starting with `${prefix}:`; returns how many. */
export async function deletePrefix(redis: Redis, prefix: string): Promise<number> {
  let cursor = '0'
  let removed = 0
  do {
    const [next, keys] = await redis.scan(cursor, 'MATCH', `${prefix}:*`, 'COUNT', 1000)
    cursor = next
    if (keys.length > 0) removed += await redis.unlink(...keys)
  } while (cursor !== '0')
  return removed
}
