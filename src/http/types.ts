import type { Config } from '../config.js'
import type { RunGateway } from '../runs/contract.js'
import type { ServiceMetrics } from './metrics.js'
import type { SyncFitter } from './sync-fits/pool.js'
import type { BodyThreads } from './body-threads/pool.js'

/** Decorations the plugins add to fastify's types. */
declare module 'fastify' {
  interface FastifyInstance {
    config: Config
    gateway: RunGateway
    metrics: ServiceMetrics
    /** Fits POST /v1/forecast's series on worker threads. */
    syncFits: SyncFitter
    /** Parses large JSON bodies on a thread (routes with largeJsonOnThread). */
    bodyThreads: BodyThreads
  }
  interface FastifyRequest {
    /** Tenant the API key belongs to (`default` when auth is off). */
    tenant: string
  }
  interface FastifyContextConfig {
    /** false: the route answers without an API key (health, metrics, docs). */
    auth?: boolean
    /** Media types the route takes as a body, named in its 415 answer; default application/json. */
    bodyTypes?: readonly string[]
    /** true: a JSON body of LARGE_JSON_BYTES or more reaches the handler unparsed, as a LargeJsonBody for bodyThreads. */
    largeJsonOnThread?: boolean
  }
}

export {}
