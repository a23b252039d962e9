import { DEFAULT_RATE_LIMIT_MAX, type Config } from '../config.js'
import type { RunGateway } from '../runs/contract.js'
import { build } from './app.js'

/** Config for building the document: values only shape descriptions, nothing connects. */
const DOC_CONFIG: Config = {
  port: 0,
  host: '127.0.0.1',
  redisUrl: 'redis://127.0.0.1:6379',
  redisPrefix: 'almanac',
  apiKeys: new Map(),
  chunkSize: 500,
  workerConcurrency: 1,
  runWorker: false,
  resultRetentionSeconds: 3600,
  bodyLimitBytes: 64 * 1024 * 1024,
  syncMaxSeries: 100,
  rateLimitMax: DEFAULT_RATE_LIMIT_MAX,
  rateLimitWindowMs: 60_000,
  logLevel: 'silent',
}

const unused = (): never => {
  throw new Error('the OpenAPI generator never calls the run gateway')
}

/** A gateway for document generation: building the app must not touch Redis. */
const NO_GATEWAY: RunGateway = {
  submit: unused,
  get: unused,
  results: unused,
  cancel: unused,
  latestForecast: unused,
  ping: unused,
  stats: unused,
}

/** The OpenAPI document as `npm run openapi` commits it (2-space JSON, trailing newline). */
export async function renderOpenApiDocument(): Promise<string> {
  const app = await build({ config: DOC_CONFIG, gateway: NO_GATEWAY })
  try {
    await app.ready()
    return `${JSON.stringify(app.swagger(), null, 2)}\n`
  } finally {
    await app.close()
  }
}
