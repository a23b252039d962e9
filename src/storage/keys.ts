/**
 * Redis key layout of the run machinery. Every key starts with
 * `${prefix}:t:${tenant}:` so tenants never share a key.
 *
 *   run:{R}            hash   the run record, progress counters and summary accumulators
 *   run:{R}:chunks     set    indexes of chunks whose results are committed (idempotence)
 *   run:{R}:in:<i>     string chunk i's input series (JSON), deleted once the chunk is done
 *   run:{R}:skus       zset   every SKU with a result, all score 0 (ordered by ZRANGEBYLEX)
 *   run:{R}:items      hash   sku -> compact JSON result item (without the sku)
 *   latest             hash   sku -> `${createdAtMs}|${runId}|${producedAt}|${points}` of the
 *                             newest run with a successful forecast for that SKU, its point
 *                             forecast compact (latest-record.ts); no TTL, one field per SKU.
 *                             Only published runs write it.
 *   published          hash   sku -> the SKU's last N published records (same form as `latest`),
 *                             newest first, one per line; no TTL (accuracy at a fixed lag)
 *   runs               zset   run id, score = the run's createdAt in ms (GET /v1/runs, newest
 *                             first); written just before the run record, trimmed as records
 *                             expire (run-index.ts); no TTL
 *
 * Redis Cluster (REDIS_CLUSTER_NODES): the run id sits in a hash tag (`{R}`), so
 * every key of one run hashes to one slot and the Lua scripts and MULTI that
 * touch several of them are legal. `latest` is only ever used alone (single-key
 * script). The prefix and tenant must not contain braces (enforced here and by
 * config), or they would become the hash tag. BullMQ's keys do not use this
 * layout: on a cluster its queues take the prefix `{prefix}` (config.ts
 * queuePrefix), one hash tag for all of a queue's keys.
 */

const TENANT = /^[A-Za-z0-9_-]{1,64}$/
const RUN_ID = /^[A-Za-z0-9-]{1,64}$/

/** True when `tenant` can be used in a key (same rule as API key tenants). */
export function isValidTenant(tenant: string): boolean {
  return TENANT.test(tenant)
}

/** True when `runId` has the shape of the ids this service issues. */
export function isValidRunId(runId: string): boolean {
  return RUN_ID.test(runId)
}

export interface RunKeys {
  readonly run: string
  readonly chunks: string
  readonly skus: string
  readonly items: string
  input(chunkIndex: number): string
}

function tenantBase(prefix: string, tenant: string): string {
  if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
  return `${prefix}:t:${tenant}`
}

export function runKeys(prefix: string, tenant: string, runId: string): RunKeys {
  if (!isValidRunId(runId)) throw new Error(`invalid run id for a Redis key: ${JSON.stringify(runId)}`)
  const run = `${tenantBase(prefix, tenant)}:run:{${runId}}`
  return {
    run,
    chunks: `${run}:chunks`,
    skus: `${run}:skus`,
    items: `${run}:items`,
    input: (chunkIndex) => `${run}:in:${chunkIndex}`,
  }
}

/** Where the accuracy records of a tenant start (erp/accuracy-store.ts lays out the keys under it). */
export function accuracyBase(prefix: string, tenant: string): string {
  return `${tenantBase(prefix, tenant)}:acc`
}

/** The tenant's exception list (zset of SKUs flagged by a tracking signal, score 0; erp/accuracy-store.ts). */
export function exceptionsKey(prefix: string, tenant: string): string {
  return `${accuracyBase(prefix, tenant)}:exceptions`
}

export function latestKey(prefix: string, tenant: string): string {
  return `${tenantBase(prefix, tenant)}:latest`
}

/** The tenant's index of run ids by creation time (run-index.ts). */
export function runIndexKey(prefix: string, tenant: string): string {
  return `${tenantBase(prefix, tenant)}:runs`
}

export function publishedKey(prefix: string, tenant: string): string {
  return `${tenantBase(prefix, tenant)}:published`
}

/**
 * Service-wide counters for /metrics (not per tenant): `stats:runs` (hash status -> runs)
 * and `stats:fits` (hash: ok, error, count, sum, le:<bound> per histogram bucket).
 * Each is only ever touched alone (single-key commands), so they are legal on a
 * cluster although they sit outside every run's hash tag (stats-store.ts).
 */
export function statsKeys(prefix: string): { readonly runs: string; readonly fits: string } {
  return { runs: `${prefix}:stats:runs`, fits: `${prefix}:stats:fits` }
}
