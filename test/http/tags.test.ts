import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/** GET /v1/tags: the tags of stored histories with their SKU counts, kept by every write and delete. */

let h: HostileApp
beforeAll(async () => {
  h = await buildHostileApp('tags')
})
afterAll(() => h?.close())

const put = (sku: string, tags: string[], key = KEY_GARDEN) =>
  h.app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, headers: auth(key), payload: { frequency: 'month', firstPeriod: '2025-01', demand: [3, 4], tags } })
const tags = async (query = '', key = KEY_GARDEN) => (await h.app.inject({ url: `/v1/tags${query}`, headers: auth(key) })).json()

describe('tags', () => {
  it('counts the SKUs carrying each tag through puts, retags, uploads and deletes', async () => {
    expect((await put('HOE-1', ['category:garden', 'season:spring'])).statusCode).toBe(201)
    expect((await put('HOE-2', ['category:garden'])).statusCode).toBe(201)
    expect((await put('BOOT-1', ['category:workwear'], KEY_HEATING)).statusCode).toBe(201)
    expect((await tags()).items).toEqual([
      { tag: 'category:garden', skus: 2 },
      { tag: 'season:spring', skus: 1 },
    ])
    // Writing the same tags again changes no count; dropping one removes it when its last SKU goes.
    expect((await put('HOE-1', ['category:garden', 'season:spring'])).statusCode).toBe(200)
    expect((await put('HOE-1', ['category:garden'])).statusCode).toBe(200)
    expect((await tags()).items).toEqual([{ tag: 'category:garden', skus: 2 }])
    // An upload with tags counts too.
    const upload = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: auth(KEY_GARDEN),
      payload: { mode: 'replace', series: [{ sku: 'HOE-3', frequency: 'month', firstPeriod: '2025-01', demand: [1], tags: ['season:autumn'] }] },
    })
    expect(upload.statusCode).toBe(200)
    expect((await tags()).items).toEqual([
      { tag: 'category:garden', skus: 2 },
      { tag: 'season:autumn', skus: 1 },
    ])
    expect((await h.app.inject({ method: 'DELETE', url: '/v1/skus/HOE-2/history', headers: auth(KEY_GARDEN) })).statusCode).toBe(204)
    expect((await tags()).items).toEqual([
      { tag: 'category:garden', skus: 1 },
      { tag: 'season:autumn', skus: 1 },
    ])
    // Another tenant sees its own.
    expect((await tags('', KEY_HEATING)).items).toEqual([{ tag: 'category:workwear', skus: 1 }])
  })

  it('pages by tag with the shared cursor, and refuses a cursor it did not issue', async () => {
    const first = await tags('?limit=1')
    expect(first.items).toEqual([{ tag: 'category:garden', skus: 1 }])
    const second = await tags(`?limit=1&cursor=${first.nextCursor}`)
    expect(second).toEqual({ items: [{ tag: 'season:autumn', skus: 1 }], nextCursor: null })
    const bad = await h.app.inject({ url: '/v1/tags?cursor=made-up', headers: auth(KEY_GARDEN) })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors).toEqual([{ path: 'cursor', message: 'cursor is not one this service issued' }])
  })
})
