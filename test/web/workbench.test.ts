import { rmSync } from 'node:fs'
import type { Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO_RUN_SETTINGS, SMALL_DEMO_SKUS, loadDemo, type DemoRun } from '../../demo/workbench.js'
import { launchBrowser, type Browser } from '../../scripts/workbench/browser.js'
import { Queue } from 'bullmq'
import { Redis } from 'ioredis'
import { queuePrefix } from '../../src/config.js'
import { CHUNK_QUEUE } from '../../src/queue/names.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { sha256 } from '../http/gateway-double.js'
import { startService, type TestService } from '../helpers/service.js'
import { buildWorkbenchPages, axeViolations, chartPatch, signedInPage as signInto, type Rgba } from './pages.js'

/**
 * The workbench in a real browser (Debian's headless Chromium through playwright-core)
 * against the real service: app, Redis, chunk workers, and the pages built by vite
 * from web/ for this test. The demo data is the invented distributor's (demo/).
 */

const KEY = 'garden-planner-key-0123456789'
const auth = { authorization: `Bearer ${KEY}` }

let outDir: string
let service: TestService
let baseUrl: string
let browser: Browser
let demoRun: DemoRun

beforeAll(async () => {
  outDir = await buildWorkbenchPages('almanac-web-test-')
  service = await startService('web-workbench', {
    config: { apiKeys: new Map([['garden', [sha256(KEY)]]]), chunkSize: 4, workerConcurrency: 1, rateLimitMax: 10_000 },
    appDeps: ({ redis, prefix }) => ({ histories: new HistoryStore(redis, { prefix }), workbenchRoot: outDir }),
  })
  baseUrl = await service.app.listen({ port: 0, host: '127.0.0.1' })
  demoRun = await loadDemo(baseUrl, SMALL_DEMO_SKUS, auth)
  browser = await launchBrowser()
  // Fail a step in seconds rather than at the test's timeout.
  browser.context.setDefaultTimeout(10_000)
}, 120_000)

afterAll(async () => {
  await browser?.close()
  await service?.close()
  if (outDir) rmSync(outDir, { recursive: true, force: true })
})

const signedInPage = (path?: string) => signInto(browser, baseUrl, KEY, path)

type Rgb = readonly [number, number, number]
const hex = (h: string): Rgb => [1, 3, 5].map((i) => parseInt(h.slice(i, i + 2), 16)) as unknown as Rgb
/** An opaque pixel within `tolerance` of `b` in each channel. */
const near = (a: Rgba, b: Rgb, tolerance = 14) => a[3] === 255 && b.every((v, i) => Math.abs(v - a[i]!) <= tolerance)

const patch = (page: Page, x: number, y: number) => chartPatch(page, x, y, 3)

const share = (pixels: readonly Rgba[], colour: string, tolerance?: number) =>
  pixels.filter((p) => near(p, hex(colour), tolerance)).length / pixels.length

describe('workbench in the browser', () => {
  it('asks for the API key once, keeps it for the session only, and opens the overview after a demo run', async () => {
    expect(demoRun.status).toBe('succeeded')
    const page = await signedInPage()
    const card = page.getByTestId('run-card')
    await card.and(page.locator('[data-status=succeeded]')).waitFor()
    expect(await card.getAttribute('data-run-id')).toBe(demoRun.id)
    expect(await page.getByTestId('run-progress').textContent()).toBe(`${SMALL_DEMO_SKUS.length} of ${SMALL_DEMO_SKUS.length} SKUs done`)
    expect(await page.getByTestId('run-failed-count').textContent()).toBe('0')
    const mixCounts = await page.locator('[data-testid=model-mix] tbody td:nth-child(2)').allTextContents()
    expect(mixCounts.map(Number).reduce((a, b) => a + b, 0)).toBe(SMALL_DEMO_SKUS.length)
    const storage = await page.evaluate(`({ session: sessionStorage.getItem('almanac.apiKey'), local: Object.keys(localStorage) })`)
    expect(storage).toEqual({ session: KEY, local: [] })

    // A deep link to the run opens in the same session without asking again.
    await page.goto(`${baseUrl}/app/runs/${demoRun.id}`)
    await page.locator('[data-testid=run-card][data-status=succeeded]').waitFor()
    expect(await page.locator('h1').textContent()).toBe(`Run ${demoRun.id}`)
    await page.close()
  })

  it('follows a run live: polls with If-None-Match (304 while unchanged) and shows the progress as it moves', async () => {
    const page = await signedInPage()
    const polls: { etag: string | undefined; status: number }[] = []
    let runPath = ''
    page.on('response', (r) => {
      if (new URL(r.url()).pathname === runPath) polls.push({ etag: r.request().headers()['if-none-match'], status: r.status() })
    })
    // With the chunk queue paused the run waits, unchanged, while the page polls it.
    const connection = new Redis(service.url, { maxRetriesPerRequest: null })
    const chunks = new Queue(CHUNK_QUEUE, { connection, prefix: queuePrefix(service.config) })
    await chunks.pause()
    const submitted = await fetch(`${baseUrl}/v1/runs`, {
      method: 'POST',
      headers: { ...auth, 'content-type': 'application/json' },
      // The demo's settings, so the SKU pages tested after this show the same kind of forecast.
      body: JSON.stringify({ ...DEMO_RUN_SETTINGS, scope: { tags: ['category:garden'] } }),
    }).then((r) => r.json() as Promise<{ id: string; progress: { total: number } }>)
    runPath = `/v1/runs/${submitted.id}`
    try {
      await page.goto(`${baseUrl}/app/runs/${submitted.id}`)
      await page.locator('[data-testid=run-card][data-status=queued]').waitFor()
      expect(await page.getByTestId('run-progress').textContent()).toBe(`0 of ${submitted.progress.total} SKUs done`)
      await expect.poll(() => polls.filter((p) => p.status === 304).length, { timeout: 10_000 }).toBeGreaterThanOrEqual(2)
    } finally {
      await chunks.resume()
      await chunks.close()
      connection.disconnect()
    }
    await page.locator('[data-testid=run-card][data-status=succeeded]').waitFor({ timeout: 60_000 })
    expect(await page.getByTestId('run-progress').textContent()).toBe(`${submitted.progress.total} of ${submitted.progress.total} SKUs done`)
    // Every poll after the first sends the ETag it holds; polling stops once the run has finished.
    for (const p of polls.slice(1)) expect(p.etag).toMatch(/^"[A-Za-z0-9_-]+"$/)
    const settled = polls.length
    await page.waitForTimeout(2500)
    expect(polls.length).toBe(settled)
    await page.close()
  })

  it('finds a SKU by prefix and draws its history, holdout, forecast and both bands', async () => {
    const page = await signedInPage('/app/skus')
    await page.getByLabel('SKU starts with').fill('GRD-100')
    await page.getByLabel('SKU starts with').press('Enter')
    await page.locator('[data-testid=sku-list-status][data-state=done][data-query="GRD-100|"]').waitFor()
    const skus = await page.locator('[data-testid=sku-table] tbody th a').allTextContents()
    expect(skus).toEqual(['GRD-1001', 'GRD-1002', 'GRD-1003'])
    // A tag filter, from a link on a tag chip's URL: the slow movers of the demo.
    await page.goto(`${baseUrl}/app/skus?tag=kind:slow-mover`)
    await page.locator('[data-testid=sku-list-status][data-state=done][data-query="|kind:slow-mover"]').waitFor()
    expect(await page.locator('[data-testid=sku-table] tbody th a').allTextContents()).toEqual(['GRD-7001', 'HTG-7002', 'WRK-7003'])
    await page.goto(`${baseUrl}/app/skus?prefix=GRD-100`)
    await page.locator('[data-testid=sku-list-status][data-state=done][data-query="GRD-100|"]').waitFor()
    await page.getByRole('link', { name: 'GRD-1001' }).click()
    expect(new URL(page.url()).pathname).toBe('/app/skus/GRD-1001')

    const chart = page.locator('[data-testid=sku-chart][data-probes]')
    await chart.waitFor()
    const history = await service.app.inject({ url: '/v1/skus/GRD-1001/history', headers: auth })
    const forecast = await service.app.inject({ url: '/v1/skus/GRD-1001/forecast', headers: auth })
    expect(await chart.getAttribute('data-history-points')).toBe(String(history.json().demand.filter((v: unknown) => v !== null).length))
    expect(await chart.getAttribute('data-forecast-points')).toBe('6')
    expect(await chart.getAttribute('data-bands')).toBe('95:6,80:6')
    expect(await chart.getAttribute('data-holdout-periods')).toBe(String(forecast.json().modelChoice.holdoutPeriods))

    // What is on the canvas at the drawn elements' coordinates (colours from web/src/chart/palette.ts).
    const probes = JSON.parse((await chart.getAttribute('data-probes'))!) as { name: string; x: number; y: number }[]
    const at = (name: string) => {
      const p = probes.find((q) => q.name === name)
      if (!p) throw new Error(`no ${name} probe in ${JSON.stringify(probes)}`)
      return patch(page, p.x, p.y)
    }
    const band80 = await at('band-80')
    expect(share(band80, '#f0bf94')).toBeGreaterThan(0.6) // solid 80% fill
    const band95 = await at('band-95')
    expect(share(band95, '#fcebdc')).toBeGreaterThan(0.2) // pale 95% fill ...
    expect(band95.some((p) => near(p, hex('#c9824a'), 40))).toBe(true) // ... with its hatching
    expect(share(band95, '#f0bf94', 4)).toBeLessThan(0.3) // and not the 80% fill (anti-aliased stripes pass near it)
    // Above the bands nothing is painted (the canvas stays transparent there) but a grid line or two.
    const outside = await at('outside-bands')
    expect(outside.filter((p) => p[3] === 0).length / outside.length).toBeGreaterThan(0.6)
    expect(share(await at('holdout'), '#e3e9f2', 6)).toBeGreaterThan(0.6)
    const line = await at('history')
    expect(line.some((p) => near(p, hex('#1b2a4a'), 40))).toBe(true)

    await expect(page.getByTestId('caution').textContent()).resolves.toContain('review before ordering')
    const chosen = await page.locator('[data-testid=candidates] tr.chosen th').textContent()
    expect(chosen).toContain(forecast.json().model.replaceAll('-', ' '))
    expect(await page.getByTestId('replenishment').textContent()).toContain('Safety stock')
    await page.close()
  })

  it('uploads a CSV dropped on the page: maps its columns, previews it and shows the report', async () => {
    const page = await signedInPage('/app/upload')
    const csv = [
      'article_code;day;units_sold;depot',
      'WRK-3901;2025-10-06;12;north',
      'WRK-3901;2025-10-20;8;north',
      'WRK-3901;2025-11-03;15;north',
      'WRK-3902;2025-10-07;4;south',
      'WRK-3902;2025-11-12;not-a-number;south',
      'WRK-3902;2025-12-01;6;south',
    ].join('\n')
    // Drop the file on the drop zone as a person would drag it there.
    const transfer = await page.evaluateHandle(`(() => {
      const dt = new DataTransfer()
      dt.items.add(new File([${JSON.stringify(csv)}], 'depot-feed.csv', { type: 'text/csv' }))
      return dt
    })()`)
    await page.getByTestId('dropzone').dispatchEvent('drop', { dataTransfer: transfer })
    const preview = page.getByTestId('upload-preview')
    await preview.waitFor()
    expect(await preview.locator('tbody tr').count()).toBe(6)
    expect(await page.getByLabel('Separator').inputValue()).toBe('semicolon')
    // day and units_sold are found by name; article_code is mapped by hand.
    expect(await page.getByLabel('Period column').inputValue()).toBe('1')
    expect(await page.getByLabel('Demand column').inputValue()).toBe('2')
    await page.getByLabel('SKU column').selectOption({ label: 'article_code' })
    expect(await preview.locator('thead th.mapped').allTextContents()).toEqual(['article_codeSKU', 'dayPeriod', 'units_soldDemand'])
    await page.getByRole('button', { name: 'Upload depot-feed.csv' }).click()
    const report = page.getByTestId('upload-report')
    await report.waitFor()
    expect(await page.getByTestId('rows-accepted').textContent()).toBe('5')
    expect(await page.getByTestId('rows-rejected').textContent()).toBe('1')
    const rejected = await page.locator('[data-testid=upload-errors] tbody tr td').allTextContents()
    expect(rejected[0]).toBe('6') // line 6 of the file
    expect(rejected[2]).toBe('WRK-3902')
    // The accepted rows are stored, summed into months.
    const stored = await service.app.inject({ url: '/v1/skus/WRK-3901/history', headers: auth })
    expect(stored.json()).toMatchObject({ firstPeriod: '2025-10', demand: [20, 15] })
    await page.close()
  })

  it('uploads a semicolon file with decimal commas and a tags column, guessing both from the file', async () => {
    const page = await signedInPage('/app/upload')
    const csv = ['sku;period;demand;tags', 'HTG-4101;2025-10;12,5;category:heating|site:north', 'HTG-4101;2025-11;7,25;site:north'].join('\n')
    await page.locator('#upload-file').setInputFiles({ name: 'pellets.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) })
    await page.getByTestId('upload-preview').waitFor()
    expect(await page.getByLabel('Separator').inputValue()).toBe('semicolon')
    expect(await page.getByLabel('Decimal mark').inputValue()).toBe('comma')
    expect(await page.getByLabel('Tags column').inputValue()).toBe('3')
    await page.getByRole('button', { name: 'Upload pellets.csv' }).click()
    await page.getByTestId('upload-report').waitFor()
    expect(await page.getByTestId('rows-accepted').textContent()).toBe('2')
    const stored = await service.app.inject({ url: '/v1/skus/HTG-4101/history', headers: auth })
    expect(stored.json()).toMatchObject({ firstPeriod: '2025-10', demand: [12.5, 7.25], tags: ['category:heating', 'site:north'] })
    await page.close()
  })

  it('keyboard only: from the overview to a SKU’s forecast figures, with the focus always visible', async () => {
    const page = await signedInPage()
    interface Focused {
      readonly text: string
      readonly id: string
      readonly className: string
      readonly tag: string
      /** Outline width in CSS pixels; 0 when there is none. */
      readonly outline: number
    }
    const focused = async () =>
      (await page.evaluate(`(() => {
        const el = document.activeElement
        if (!el || el === document.body) return null
        const style = getComputedStyle(el)
        return {
          text: (el.textContent || '').trim(),
          id: el.id,
          className: typeof el.className === 'string' ? el.className : '',
          tag: el.tagName,
          outline: style.outlineStyle === 'none' ? 0 : parseFloat(style.outlineWidth),
        }
      })()`)) as Focused | null
    /** Tab until `match` is focused (at most 30 presses), checking every stop shows its focus. */
    const tabTo = async (match: (f: Focused) => boolean, what: string) => {
      for (let i = 0; i < 30; i++) {
        await page.keyboard.press('Tab')
        const f = await focused()
        if (f === null) continue
        expect(f.outline, `focus ring on ${f.tag} ${f.text.slice(0, 40)}`).toBeGreaterThanOrEqual(2)
        if (match(f)) return
      }
      throw new Error(`could not reach ${what} with Tab`)
    }
    await tabTo((f) => f.text === 'Skip to content', 'the skip link')
    await tabTo((f) => f.text === 'SKUs', 'the SKUs link')
    await page.keyboard.press('Enter')
    await page.waitForURL('**/app/skus')
    await tabTo((f) => f.id === 'sku-prefix', 'the prefix field')
    await page.keyboard.type('WRK-7')
    await page.keyboard.press('Enter')
    await page.locator('[data-testid=sku-list-status][data-state=done][data-query="WRK-7|"]').waitFor()
    await tabTo((f) => f.text === 'WRK-7003', 'the WRK-7003 link')
    await page.keyboard.press('Enter')
    await page.waitForURL('**/app/skus/WRK-7003')
    await page.locator('[data-testid=sku-chart][data-probes]').waitFor()
    await tabTo((f) => f.className.includes('chart-canvas'), 'the chart')
    await page.keyboard.press('End')
    const readout = page.locator('.chart-readout')
    const lastPeriod = await readout.textContent()
    expect(lastPeriod).toMatch(/^2026-06: forecast [\d.]+; 80% band [\d.]+ to [\d.]+, 95% band [\d.]+ to [\d.]+$/)
    await page.keyboard.press('ArrowLeft')
    expect(await readout.textContent()).toMatch(/^2026-05: forecast/)
    await page.keyboard.press('Home')
    expect(await readout.textContent()).toMatch(/^2021-03: demand \d+$/)
    await page.close()
  })

  it('has no serious or critical accessibility violations (axe-core) on any page', async () => {
    const check = async (page: Page, label: string) => {
      const violations = await axeViolations(page)
      const bad = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical')
      expect(bad, `${label}: ${JSON.stringify(bad)}`).toEqual([])
    }
    const signIn = await browser.context.newPage()
    await signIn.goto(`${baseUrl}/app/`)
    await signIn.getByLabel('API key').waitFor()
    await check(signIn, 'sign-in')
    await signIn.close()

    const page = await signedInPage()
    await page.locator('[data-testid=run-card][data-status=succeeded]').waitFor()
    await check(page, 'overview')
    await page.goto(`${baseUrl}/app/skus?tag=category:heating`)
    await page.locator('[data-testid=sku-list-status][data-state=done]').waitFor()
    await check(page, 'SKU list')
    await page.goto(`${baseUrl}/app/skus/WRK-7003`)
    await page.locator('[data-testid=sku-chart][data-probes]').waitFor()
    await page.locator('summary').click() // the forecast table too
    await check(page, 'SKU page')
    await page.goto(`${baseUrl}/app/upload`)
    await page.locator('#upload-file').setInputFiles({ name: 'small.csv', mimeType: 'text/csv', buffer: Buffer.from('sku,period,demand\nGRD-1001,2026-01,40\n') })
    await page.getByTestId('upload-preview').waitFor()
    await check(page, 'upload')
    await page.close()
  })
})
