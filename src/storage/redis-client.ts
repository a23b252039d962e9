import type { Cluster, Redis } from 'ioredis'

/**
 * A connection to one Redis server or to a Redis Cluster (queue/connection.ts
 * opens either, from config). The stores use only commands both offer, and
 * only on keys a cluster accepts together (one slot per call; see keys.ts).
 */
export type RedisClient = Redis | Cluster
