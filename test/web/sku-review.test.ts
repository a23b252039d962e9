import { rmSync } from 'node:fs'
import type { Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { SMALL_DEMO_SKUS, demoTags, loadDemo } from '../../demo/workbench.js'
import { launchBrowser, type Browser } from '../../scripts/workbench/browser.js'
import { sha256 } from '../http/gateway-double.js'
import { planningDeps, startService, type TestService } from '../helpers/service.js'
import { buildWorkbenchPages, axeViolations, chartPatch, signedInPage as signInto, type Rgba } from './pages.js'

/**
 * The SKU page's look back and look aside, in a real browser (Debian's headless
 * Chromium through playwright-core) against the real service: past published
 * forecasts drawn against what happened, the accuracy record, and a what-if
 * forecast with another candidate model that is never published. The demo data
 * is the invented distributor's; the numbers checked are the service's own
 * answers (GET /v1/skus/{sku}/accuracy, POST /v1/forecast), read beside the page.
 */

const KEY = 'garden-planner-key-0123456789'
const auth = { authorization: `Bearer ${KEY}` }
const SKU = 'GRD-1002'

let outDir: string
let service: TestService
let baseUrl: string
let browser: Browser
let actuals: { period: string; forecast: number; actual: number }[]

beforeAll(async () => {
  outDir = await buildWorkbenchPages('almanac-web-review-')
  service = await startService('web-review', {
    erp: true,
    config: { apiKeys: new Map([['garden', [sha256(KEY)]]]), chunkSize: 4, workerConcurrency: 1, rateLimitMax: 10_000 },
    // Uploads score the published forecasts they bring actuals for and record value added, as in production (server.ts).
    appDeps: (ctx) => ({
      ...planningDeps(ctx, (err) => {
        throw err
      }),
      workbenchRoot: outDir,
    }),
  })
  baseUrl = await service.app.listen({ port: 0, host: '127.0.0.1' })
  const run = await loadDemo(baseUrl, SMALL_DEMO_SKUS, auth)
  expect(run.status).toBe('succeeded')
  // Two months of actual demand arrive for the published forecast's first two periods: well above, then well below it.
  const published = (await service.app.inject({ url: `/v1/skus/${SKU}/forecast`, headers: auth })).json()
  const [f0, f1] = published.forecast as { period: string; demand: number }[]
  actuals = [
    { period: f0!.period, forecast: f0!.demand, actual: Math.round(f0!.demand * 1.6 + 20) },
    { period: f1!.period, forecast: f1!.demand, actual: Math.round(f1!.demand * 0.4) },
  ]
  const upload = await service.app.inject({
    method: 'POST',
    url: '/v1/history?frequency=month',
    headers: auth,
    payload: { mode: 'overwrite', series: [{ sku: SKU, firstPeriod: f0!.period, demand: actuals.map((a) => a.actual) }] },
  })
  expect(upload.statusCode).toBe(200)
  browser = await launchBrowser()
  browser.context.setDefaultTimeout(10_000)
}, 120_000)

afterAll(async () => {
  await browser?.close()
  await service?.close()
  if (outDir) rmSync(outDir, { recursive: true, force: true })
})

const signedInPage = (path?: string) => signInto(browser, baseUrl, KEY, path)


const patch = (page: Page, x: number, y: number) => chartPatch(page, x, y, 4)

const near = (rgb: readonly number[], tolerance: number) => (p: Rgba) => p[3] === 255 && rgb.every((v, i) => Math.abs(v - p[i]!) <= tolerance)

describe('the SKU page looks back and aside', () => {
  it('draws past published forecasts against what happened and lists the accuracy record', async () => {
    const accuracy = (await service.app.inject({ url: `/v1/skus/${SKU}/accuracy`, headers: auth })).json()
    expect(accuracy.periods.map((p: { period: string }) => p.period)).toEqual(actuals.map((a) => a.period))
    expect(accuracy.periods.map((p: { actualDemand: number }) => p.actualDemand)).toEqual(actuals.map((a) => a.actual))

    const page = await signedInPage(`/app/skus/${SKU}`)
    const chart = page.locator('[data-testid=sku-chart][data-probes]')
    await chart.waitFor()
    expect(await chart.getAttribute('data-past-points')).toBe('2')
    // A diamond is drawn in the past-forecast colour (palette.ts) where its probe points.
    const probes = JSON.parse((await chart.getAttribute('data-probes'))!) as { name: string; x: number; y: number }[]
    const probe = probes.find((q) => q.name === 'past')
    expect(probe).toBeDefined()
    const purple = [0x5b, 0x2a, 0x86]
    expect((await patch(page, probe!.x, probe!.y)).filter(near(purple, 30)).length).toBeGreaterThan(2)

    const rows = page.locator('[data-testid=accuracy-periods] tbody tr')
    await expect(rows.count()).resolves.toBe(2)
    const text = await rows.allTextContents()
    // Newest first; each row shows the period, its forecast and its actual.
    expect(text[0]).toContain(actuals[1]!.period)
    expect(text[1]).toContain(actuals[0]!.period)
    expect(text[1]).toContain(new Intl.NumberFormat('en', { maximumFractionDigits: 1 }).format(actuals[0]!.actual))
    expect(await page.getByTestId('accuracy-summary').textContent()).toContain('Periods scored2')

    // Forecast value added, as GET /v1/skus/{sku}/value-added computes it (no adjustments here: final = statistical).
    const added = (await service.app.inject({ url: `/v1/skus/${SKU}/value-added`, headers: auth })).json()
    const precise = new Intl.NumberFormat('en', { maximumFractionDigits: 3 })
    const statisticalRow = page.locator('[data-testid=value-added] tbody tr').filter({ hasText: 'Statistical' })
    expect(await statisticalRow.locator('td').first().textContent()).toBe(precise.format(added.mae.statistical))
    expect(added.mae.final).toBe(added.mae.statistical)
    await page.close()
  })

  it('forecasts with another candidate as a what-if: drawn and tabled, equal to POST /v1/forecast, never published', async () => {
    const before = (await service.app.inject({ url: `/v1/skus/${SKU}/forecast`, headers: auth })).json()
    const page = await signedInPage(`/app/skus/${SKU}`)
    await page.locator('[data-testid=sku-chart][data-probes]').waitFor()
    const tryButton = page.getByRole('button', { name: /^Try .* \(what-if, not published\)$/ }).first()
    const label = (await tryButton.getAttribute('aria-label'))!
    const model = label.replace(/^Try /, '').replace(/ \(what-if, not published\)$/, '').replaceAll(' ', '-')
    expect(model).not.toBe(before.model)
    await tryButton.click()
    await page.getByTestId('what-if-table').waitFor()
    const horizon = String(before.forecast.length)
    await page.locator(`[data-testid=sku-chart][data-what-if-points="${horizon}"]`).waitFor()
    expect(await page.getByTestId('what-if').textContent()).toContain('Not published')

    // The page's figures are the service's: the same request made directly.
    const history = (await service.app.inject({ url: `/v1/skus/${SKU}/history`, headers: auth })).json()
    const direct = await service.app.inject({
      method: 'POST',
      url: '/v1/forecast',
      headers: auth,
      payload: {
        horizon: before.forecast.length,
        frequency: 'month',
        holdoutPeriods: before.modelChoice.holdoutPeriods,
        rankBy: before.modelChoice.rankBy,
        models: [model],
        series: [{ sku: SKU, firstPeriod: history.firstPeriod, demand: history.demand }],
      },
    })
    expect(direct.statusCode).toBe(200)
    const item = direct.json().items[0]
    expect(item.model).toBe(model)
    const cells = await page.locator('[data-testid=what-if-table] tbody tr td:nth-child(3)').allTextContents()
    const fmt = new Intl.NumberFormat('en', { maximumFractionDigits: 1 })
    expect(cells).toEqual(item.forecast.map((p: { demand: number }) => fmt.format(p.demand)))

    // Nothing was published: the SKU's forecast is the same run's, with the same figures.
    const after = (await service.app.inject({ url: `/v1/skus/${SKU}/forecast`, headers: auth })).json()
    expect(after.runId).toBe(before.runId)
    expect(after.model).toBe(before.model)
    expect(after.forecast.map((p: { demand: number }) => p.demand)).toEqual(before.forecast.map((p: { demand: number }) => p.demand))

    await page.getByRole('button', { name: 'Close the what-if' }).click()
    await page.locator('[data-testid=sku-chart][data-what-if-points="0"]').waitFor()
    await page.close()
  })

  it('has no serious or critical accessibility violations (axe-core) with the what-if and the accuracy record shown', async () => {
    const page = await signedInPage(`/app/skus/${SKU}`)
    await page.locator('[data-testid=sku-chart][data-probes]').waitFor()
    await page.getByRole('button', { name: /\(what-if, not published\)$/ }).first().click()
    await page.getByTestId('what-if-table').waitFor()
    for (const summary of await page.locator('summary').all()) await summary.click()
    const violations = await axeViolations(page)
    expect(violations.filter((v) => v.impact === 'serious' || v.impact === 'critical')).toEqual([])
    await page.close()
  })
})

describe('the overview pools a tag', () => {
  it('shows the accuracy and value added of a chosen tag as GET /v1/accuracy/by-tag and /v1/value-added/by-tag compute them', async () => {
    const tag = demoTags(SKU)[0]!
    const pooled = (await service.app.inject({ url: `/v1/accuracy/by-tag?tag=${encodeURIComponent(tag)}`, headers: auth })).json()
    expect(pooled.scoredPeriods).toBe(2)
    const page = await signedInPage('/app/')
    const figures = page.getByTestId('tag-figures')
    await figures.waitFor()
    await page.getByLabel('Tag', { exact: true }).selectOption(tag)
    const summary = page.getByTestId('tag-accuracy')
    await summary.filter({ hasText: 'Periods scored2' }).waitFor()
    const precise = new Intl.NumberFormat('en', { maximumFractionDigits: 3 })
    expect(await summary.textContent()).toContain(`WAPE %${precise.format(pooled.wape)}`)
    const added = (await service.app.inject({ url: `/v1/value-added/by-tag?tag=${encodeURIComponent(tag)}`, headers: auth })).json()
    const statisticalRow = figures.locator('[data-testid=value-added] tbody tr').filter({ hasText: 'Statistical' })
    expect(await statisticalRow.locator('td').first().textContent()).toBe(precise.format(added.mae.statistical))
    // At lag 1 only forecasts made one period before are scored: the figures change with the choice.
    const atLag = (await service.app.inject({ url: `/v1/accuracy/by-tag?tag=${encodeURIComponent(tag)}&lag=1`, headers: auth })).json()
    await page.getByLabel('Forecasts scored').selectOption('1')
    await summary.filter({ hasText: `Periods scored${atLag.scoredPeriods}` }).waitFor()
    // No serious or critical accessibility violations (axe-core) with the figures shown.
    const violations = await axeViolations(page)
    expect(violations.filter((v) => v.impact === 'serious' || v.impact === 'critical')).toEqual([])
    await page.close()
  })
})

