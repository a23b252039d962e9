import { LargeJsonBody } from '../body-threads/pool.js'
import { createHash, type Hash } from 'node:crypto'
import { Readable, Transform } from 'node:stream'
import fp from 'fastify-plugin'
import type { FastifyReply, FastifyRequest } from 'fastify'
import { ProblemError } from '../../errors.js'
import type { IdempotencyStore, Lease } from '../../storage/erp/idempotency-store.js'

declare module 'fastify' {
  interface FastifyContextConfig {
    /** The route honours the Idempotency-Key header. */
    idempotency?: boolean
  }
  interface FastifyRequest {
    idempotency?: IdempotencyState
  }
}

interface IdempotencyState {
  readonly key: string
  readonly lease: Lease
  /** Renews the lease while the request works; cleared when it settles. */
  readonly renewal: NodeJS.Timeout
  /** Known up front for JSON bodies; for streamed bodies once the stream ended. */
  hash: string | null
  settled: boolean
  /** False once the answer turned out to depend on stored state (see keptForReplay). */
  replayable: boolean
}

/** Visible ASCII, 1-255 characters. */
const KEY_PATTERN = /^[\x21-\x7e]{1,255}$/

export const REUSED_ANSWER_HEADER = 'almanac-reused-answer'

/**
 * `Idempotency-Key` on routes with `config.idempotency`. The first request
 * with a key runs and its answer (status < 500) is kept 24 h with a hash of
 * method, URL (with query), content type and body; a later request with the
 * same key and hash gets that answer again with `Almanac-Reused-Answer: true`,
 * one with another hash a 422 `idempotency-key-reused`, and one arriving while
 * the first is still in flight a 409 `idempotency-key-in-use`. A 5xx answer,
 * or a 4xx a later attempt could pass (keptForReplay), frees the key. While in flight the key is a lease the request renews; if the
 * server dies, renewals stop and the key frees itself within one lease. JSON bodies are hashed as parsed (JSON.stringify, so
 * whitespace does not matter but key order does); streamed CSV/NDJSON bodies
 * are hashed as their bytes pass to the parser.
 */
export default fp<{ store?: IdempotencyStore }>(
  async (app, opts) => {
    const store = opts.store ?? null

    app.addHook('preValidation', async (request, reply) => {
      if (request.routeOptions.config?.idempotency !== true) return
      const key = request.headers['idempotency-key']
      if (key === undefined) return
      if (typeof key !== 'string' || !KEY_PATTERN.test(key)) {
        throw new ProblemError('validation-failed', 'The Idempotency-Key header is not valid', [
          { path: 'Idempotency-Key', message: 'must be 1-255 visible ASCII characters' },
        ])
      }
      if (store === null) throw new ProblemError('not-ready', 'Idempotency keys are not configured on this server')
      const streamed = request.body instanceof Readable
      const hash = createHash('sha256').update(`${request.method} ${request.url}\n${request.headers['content-type'] ?? ''}\n`)
      const existing = await store.get(request.tenant, key)
      // A streamed body left unread: close the connection rather than drain it.
      // Retry-After: a key left by a crashed server is free within one lease.
      const unread: Record<string, string> = { 'retry-after': String(Math.ceil(store.leaseMs / 1000)), ...(streamed ? { connection: 'close' } : {}) }
      if (existing?.state === 'pending') throw inUse(unread)
      if (existing?.state === 'done') {
        const digest = streamed
          ? await drainInto(hash, request.body as Readable, app.config.bodyLimitBytes)
          : hashBody(hash, request.body).digest('hex')
        if (digest !== existing.hash) throw reused()
        return replay(reply, existing)
      }
      const lease = await store.claim(request.tenant, key)
      if (lease === null) throw inUse(unread)
      const tenant = request.tenant
      const renewal = setInterval(() => {
        store.renew(tenant, key, lease).then(
          (held) => held || request.log.warn('idempotency lease lost while the request was in flight'),
          (err: unknown) => request.log.warn({ err }, 'could not renew the idempotency lease'),
        )
      }, Math.max(1, Math.floor(store.leaseMs / 3)))
      renewal.unref()
      const state: IdempotencyState = { key, lease, renewal, hash: null, settled: false, replayable: true }
      request.idempotency = state
      if (!streamed) {
        state.hash = hashBody(hash, request.body).digest('hex')
        return
      }
      const source = request.body as Readable
      const tap = new Transform({
        transform(chunk: Buffer, _enc, done) {
          hash.update(chunk)
          done(null, chunk)
        },
        flush(done) {
          state.hash = hash.digest('hex')
          done()
        },
      })
      source.on('error', (err) => tap.destroy(err))
      request.body = source.pipe(tap)
    })

    app.addHook('onError', async (request, _reply, error) => {
      if (request.idempotency && error instanceof ProblemError && error.opts.dependsOnState === true) request.idempotency.replayable = false
    })

    app.addHook('onSend', async (request, reply, payload) => {
      const state = request.idempotency
      if (!state || state.settled || store === null) return payload
      state.settled = true
      clearInterval(state.renewal)
      try {
        if (!keptForReplay(reply.statusCode, state) || state.hash === null || typeof payload !== 'string') {
          await store.release(request.tenant, state.key, state.lease)
        } else {
          const kept = await store.complete(request.tenant, state.key, state.lease, {
            hash: state.hash,
            status: reply.statusCode,
            contentType: headerText(reply.getHeader('content-type')),
            location: headerText(reply.getHeader('location')),
            body: payload,
          })
          if (!kept) request.log.warn('idempotency lease lost before the answer: it is not kept for replay')
        }
      } catch (err) {
        request.log.error({ err }, 'could not record the idempotency key')
      }
      return payload
    })

    // A request that ended without an answer (client went away) frees its key.
    app.addHook('onResponse', async (request) => {
      const state = request.idempotency
      if (!state || state.settled || store === null) return
      state.settled = true
      clearInterval(state.renewal)
      await store.release(request.tenant, state.key, state.lease).catch((err) => request.log.error({ err }, 'could not free the idempotency key'))
    })
  },
  { name: 'idempotency', dependencies: ['config', 'auth'] },
)

/**
 * Answers kept for replay: successes, and refusals that only the request
 * itself caused (invalid body, too large, wrong type), since sending it again
 * would be refused again. Not kept: 5xx, and 4xx a later attempt could pass
 * without changing the request: not found, conflicts and limits (404, 409),
 * rate limits (429), and any problem that says it depends on stored state.
 */
function keptForReplay(status: number, state: IdempotencyState): boolean {
  if (status >= 500 || !state.replayable) return false
  return status < 400 || ![401, 403, 404, 408, 409, 423, 425, 429].includes(status)
}

function replay(reply: FastifyReply, answer: { status: number; contentType: string | null; location: string | null; body: string }) {
  reply.code(answer.status).header(REUSED_ANSWER_HEADER, 'true')
  if (answer.contentType) reply.header('content-type', answer.contentType)
  if (answer.location) reply.header('location', answer.location)
  return reply.send(answer.body)
}

async function drainInto(hash: Hash, source: Readable, max: number): Promise<string> {
  let seen = 0
  for await (const chunk of source) {
    seen += (chunk as Buffer).length
    if (seen > max) throw new ProblemError('payload-too-large', `The upload is larger than ${max} bytes`, undefined, { connection: 'close' })
    hash.update(chunk as Buffer)
  }
  return hash.digest('hex')
}

function headerText(v: ReturnType<FastifyReply['getHeader']>): string | null {
  if (v === undefined) return null
  return Array.isArray(v) ? v.join(', ') : String(v)
}

const inUse = (headers: Record<string, string>) =>
  new ProblemError(
    'idempotency-key-in-use',
    'A request with this Idempotency-Key is still being processed; retry after it has answered',
    undefined,
    headers,
  )
const reused = () =>
  new ProblemError('idempotency-key-reused', 'This Idempotency-Key was used with a different request (method, URL or body)')

export type { FastifyRequest }

/** Hash a JSON body: its bytes when it was left unparsed (a large body, parsed on a thread), else the parsed value. */
function hashBody(hash: Hash, body: unknown): Hash {
  if (!(body instanceof LargeJsonBody)) return hash.update(JSON.stringify(body ?? null))
  for (const block of body.blocks) hash.update(block)
  return hash
}
