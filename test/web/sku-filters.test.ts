import { readFileSync, rmSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { SMALL_DEMO_SKUS, loadDemo } from '../../demo/workbench.js'
import { launchBrowser, type Browser } from '../../scripts/workbench/browser.js'
import { MODEL_NAMES } from '../../src/engine/index.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { MODEL_OPTIONS, WARNING_OPTIONS } from '../../web/src/sku-filters.js'
import { sha256 } from '../http/gateway-double.js'
import { startService, type TestService } from '../helpers/service.js'
import { buildWorkbenchPages, axeViolations, signedInPage as signInto } from './pages.js'

/**
 * The SKU list's filters in a real browser (Debian's headless Chromium through
 * playwright-core) against the real service after a demo run of the invented
 * distributor: the rows shown are checked against the service's own answer
 * (GET /v1/skus with the same filter), read beside the page.
 */

const KEY = 'garden-planner-key-0123456789'
const auth = { authorization: `Bearer ${KEY}` }

let outDir: string
let service: TestService
let baseUrl: string
let browser: Browser

interface Listed {
  sku: string
  published?: { model: string | null; failed: boolean }
}

async function api(path: string): Promise<{ items: Listed[]; nextCursor: string | null }> {
  const r = await fetch(`${baseUrl}${path}`, { headers: auth })
  expect(r.status, path).toBe(200)
  return (await r.json()) as { items: Listed[]; nextCursor: string | null }
}

beforeAll(async () => {
  outDir = await buildWorkbenchPages('almanac-web-filters-')
  service = await startService('web-sku-filters', {
    config: { apiKeys: new Map([['garden', [sha256(KEY)]]]), chunkSize: 4, workerConcurrency: 1, rateLimitMax: 10_000 },
    appDeps: ({ redis, prefix }) => ({ histories: new HistoryStore(redis, { prefix }), workbenchRoot: outDir }),
  })
  baseUrl = await service.app.listen({ port: 0, host: '127.0.0.1' })
  const run = await loadDemo(baseUrl, SMALL_DEMO_SKUS, auth)
  expect(run.status).toBe('succeeded')
  browser = await launchBrowser()
  browser.context.setDefaultTimeout(10_000)
}, 120_000)

afterAll(async () => {
  await browser?.close()
  await service?.close()
  if (outDir) rmSync(outDir, { recursive: true, force: true })
})

const signedInPage = (path?: string) => signInto(browser, baseUrl, KEY, path)

const codesIn = (markdown: string) => [...markdown.matchAll(/^\| `([a-z0-9-]+)` \|/gm)].map((m) => m[1]!)

describe('SKU list filters', { timeout: 60_000 }, () => {
  it("the page's model and warning choices are the engine's models and the documented warning codes", () => {
    expect([...MODEL_OPTIONS].sort()).toEqual([...MODEL_NAMES].sort())
    const documented = codesIn(readFileSync(new URL('../../docs/warnings.md', import.meta.url), 'utf8'))
    expect([...WARNING_OPTIONS].sort()).toEqual([...documented].sort())
  })

  it('filters by model: only matching rows, the same SKUs the API lists, and the filter kept in the URL', async () => {
    const all = await api('/v1/skus?limit=1000')
    const models = [...new Set(all.items.map((i) => i.published?.model).filter((m): m is string => typeof m === 'string'))]
    expect(models.length).toBeGreaterThan(1)
    // The model of fewest SKUs: the filter must leave some rows out.
    const count = (m: string) => all.items.filter((i) => i.published?.model === m).length
    const model = models.sort((a, b) => count(a) - count(b))[0]!
    const expected = (await api(`/v1/skus?model=${model}&limit=200`)).items.map((i) => i.sku)
    expect(expected.length).toBe(count(model))
    expect(expected.length).toBeLessThan(all.items.length)

    const page = await signedInPage('/app/skus')
    await page.locator('[data-testid=sku-list-status][data-state=done]').waitFor()
    await page.getByLabel('Per page').selectOption('200')
    await page.getByLabel('Model').selectOption(model)
    await page.locator(`[data-testid=sku-list-status][data-state=done][data-filters="model=${model}"]`).waitFor()
    const rows = page.locator('[data-testid=sku-table] tbody tr')
    expect(await rows.locator('th a').allTextContents()).toEqual(expected)
    const shownModels = await rows.evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-model')))
    expect(new Set(shownModels)).toEqual(new Set([model]))
    expect(new URL(page.url()).search).toBe(`?model=${model}`)

    // A deep link with the filter opens the same list; the control shows the filter.
    await page.goto(`${baseUrl}/app/skus?model=${model}`)
    await page.locator(`[data-testid=sku-list-status][data-state=done][data-filters="model=${model}"]`).waitFor()
    expect(await page.getByLabel('Model').inputValue()).toBe(model)
    expect(await rows.count()).toBe(Math.min(50, expected.length))

    // Failed only: the demo's series all fit, so nothing is listed and the page says so.
    const failed = await api('/v1/skus?failed=true')
    await page.getByLabel('Failed forecasts').check()
    await page.locator(`[data-testid=sku-list-status][data-state=done][data-filters="model=${model}&failed=true"]`).waitFor()
    expect(await rows.count()).toBe(failed.items.filter((i) => i.published?.model === model).length)
    await page.close()
  })

  it('orders by holdout error, largest first, as GET /v1/skus?sort=error does', async () => {
    const expected = (await api('/v1/skus?sort=error&limit=50')).items.map((i) => i.sku)
    expect(expected.length).toBeGreaterThan(1)
    const page = await signedInPage('/app/skus')
    await page.locator('[data-testid=sku-list-status][data-state=done]').waitFor()
    await page.getByLabel('Order').selectOption('error')
    await page.locator('[data-testid=sku-list-status][data-state=done][data-filters="sort=error"]').waitFor()
    const rows = page.locator('[data-testid=sku-table] tbody tr')
    expect(await rows.locator('th a').allTextContents()).toEqual(expected)
    const errors = (await rows.locator('td.num').evaluateAll((tds) => tds.map((td) => td.textContent))).filter((t) => t?.includes('MASE'))
    const values = errors.map((t) => Number(t!.split(' ')[0]!.replace(/,/g, '')))
    expect(values.length).toBe(expected.length)
    expect(values).toEqual([...values].sort((a, b) => b - a))
    await page.close()
  })

  it('is reachable by keyboard and has no serious or critical accessibility violations (axe-core)', async () => {
    const page = await signedInPage('/app/skus?minError=0.5')
    await page.locator('[data-testid=sku-list-status][data-state=done][data-filters="minError=0.5"]').waitFor()
    expect(await page.getByLabel('Holdout error at least').inputValue()).toBe('0.5')
    // Keyboard: focus the model select and choose with the arrow keys; the list follows.
    await page.getByLabel('Model').focus()
    await page.keyboard.press('ArrowDown')
    await page.locator('[data-testid=sku-list-status][data-state=done][data-filters^="model="]').waitFor()
    const violations = await axeViolations(page)
    expect(violations.filter((v) => v.impact === 'serious' || v.impact === 'critical')).toEqual([])
    await page.close()
  })
})
