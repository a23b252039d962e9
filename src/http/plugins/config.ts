import fp from 'fastify-plugin'
import type { Config } from '../../config.js'
import type { RunGateway } from '../../runs/contract.js'
import type { ServiceMetrics } from '../metrics.js'
import '../types.js'

/** Makes the config, the run gateway and the metrics available to every plugin and route. */
export default fp<{ config: Config; gateway: RunGateway; metrics: ServiceMetrics }>(
  async (app, opts) => {
    app.decorate('config', opts.config)
    app.decorate('gateway', opts.gateway)
    app.decorate('metrics', opts.metrics)
  },
  { name: 'config' },
)
