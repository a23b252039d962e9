import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { RunRequest } from '../../src/schemas/run.js'
import type { RunRecord } from '../../src/runs/contract.js'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHistoryApp, type HistoryApp } from './history-helpers.js'

let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('http-idempotency')
})
afterAll(() => h?.close())

const REQUEST = { horizon: 3, frequency: 'month', series: [{ sku: 'HOSE-25M', demand: [4, 6, 5, 7] }] }
const postRun = (key: string | undefined, payload: object, apiKey = KEY_GARDEN) =>
  h.app.inject({
    method: 'POST',
    url: '/v1/runs',
    headers: { ...auth(apiKey), ...(key === undefined ? {} : { 'idempotency-key': key }) },
    payload,
  })

describe('Idempotency-Key on POST /v1/runs', () => {
  it('replays the first answer for the same key and body, without a second run', async () => {
    const first = await postRun('run-key-1', REQUEST)
    expect(first.statusCode).toBe(202)
    const submitted = h.gateway.submitted.length
    const again = await postRun('run-key-1', { ...REQUEST })
    expect(again.statusCode).toBe(202)
    expect(again.headers['almanac-reused-answer']).toBe('true')
    expect(again.headers.location).toBe(first.headers.location)
    expect(again.json()).toEqual(first.json())
    expect(h.gateway.submitted.length).toBe(submitted)
    expect(first.headers['almanac-reused-answer']).toBeUndefined()
  })

  it('answers 422 idempotency-key-reused for the same key with another body', async () => {
    await postRun('run-key-2', REQUEST)
    const other = await postRun('run-key-2', { ...REQUEST, horizon: 4 })
    expect(other.statusCode).toBe(422)
    expect(other.json()).toEqual({
      type: 'https://almanac.example/problems/idempotency-key-reused',
      title: 'Idempotency key reused',
      status: 422,
      detail: 'This Idempotency-Key was used with a different request (method, URL or body)',
    })
  })

  it('keeps keys per tenant', async () => {
    const garden = await postRun('shared-key', REQUEST)
    const heating = await postRun('shared-key', REQUEST, KEY_HEATING)
    expect(heating.statusCode).toBe(202)
    expect(heating.headers['almanac-reused-answer']).toBeUndefined()
    expect(heating.json().id).not.toBe(garden.json().id)
  })

  it('answers 409 to a second request while the first is in flight', async () => {
    let release!: () => void
    const gate = new Promise<void>((r) => (release = r))
    const submit = h.gateway.submit.bind(h.gateway)
    h.gateway.submit = async (tenant: string, request: RunRequest): Promise<RunRecord> => {
      await gate
      return submit(tenant, request)
    }
    try {
      const first = postRun('slow-key', REQUEST)
      await new Promise((r) => setTimeout(r, 100))
      const second = await postRun('slow-key', REQUEST)
      expect(second.statusCode).toBe(409)
      expect(second.json().type).toBe('https://almanac.example/problems/idempotency-key-in-use')
      release()
      expect((await first).statusCode).toBe(202)
      expect((await postRun('slow-key', REQUEST)).headers['almanac-reused-answer']).toBe('true')
    } finally {
      h.gateway.submit = submit
    }
  })

  it('frees the key after a 5xx so a retry runs', async () => {
    const submit = h.gateway.submit.bind(h.gateway)
    h.gateway.submit = async () => {
      throw new Error('queue down')
    }
    const failed = await postRun('retry-key', REQUEST)
    h.gateway.submit = submit
    expect(failed.statusCode).toBe(500)
    const retried = await postRun('retry-key', REQUEST)
    expect(retried.statusCode).toBe(202)
    expect(retried.headers['almanac-reused-answer']).toBeUndefined()
  })

  it('refuses a malformed key', async () => {
    const res = await postRun('has space', REQUEST)
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'Idempotency-Key', message: 'must be 1-255 visible ASCII characters' }])
  })
})

describe('Idempotency-Key on a streamed CSV upload', () => {
  const upload = (key: string, body: string, query = '') =>
    h.app.inject({
      method: 'POST',
      url: `/v1/history${query}`,
      headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv', 'idempotency-key': key },
      payload: body,
    })

  it('replays the report for the same bytes and refuses other bytes or another query', async () => {
    const body = 'sku,period,demand\nRAKE,2025-01-05,2\nRAKE,2025-01-09,3\nRAKE,bad,1\n'
    const first = await upload('csv-key', body)
    expect(first.statusCode).toBe(200)
    const stored = (await h.app.inject({ url: '/v1/skus/RAKE/history', headers: auth(KEY_GARDEN) })).json()
    const again = await upload('csv-key', body)
    expect(again.headers['almanac-reused-answer']).toBe('true')
    expect(again.json()).toEqual(first.json())
    const after = (await h.app.inject({ url: '/v1/skus/RAKE/history', headers: auth(KEY_GARDEN) })).json()
    expect(after.updatedAt).toBe(stored.updatedAt)
    expect((await upload('csv-key', body.replace('3', '4'))).statusCode).toBe(422)
    expect((await upload('csv-key', body, '?mode=replace')).statusCode).toBe(422)
  })
})
