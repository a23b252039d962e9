import type { FastifyInstance } from 'fastify'
import { callbackUrlRefusal } from '../callbacks/addresses.js'
import { ProblemError } from '../errors.js'

/**
 * Refuse a callback URL at registration (a run's or schedule's callbackUrl, a
 * standing callback) when its address literal or localhost name could never
 * be called under this server's settings: a 400 naming the field, instead of a
 * delivery that fails later. Names are checked again on every delivery.
 */
export function checkCallbackUrl(app: FastifyInstance, url: string | undefined, path: string): void {
  if (url === undefined) return
  const why = callbackUrlRefusal(url, app.config.callbackAllowPrivateNetworks ?? false)
  if (why !== null) throw new ProblemError('validation-failed', `The callback URL cannot be called: ${why}`, [{ path, message: why }])
}
