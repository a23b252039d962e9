import { rmSync } from 'node:fs'
import type { Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { SMALL_DEMO_SKUS, loadDemo } from '../../demo/workbench.js'
import { launchBrowser, type Browser } from '../../scripts/workbench/browser.js'
import { createAdjustmentService } from '../../src/http/adjustment-services.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { RunStore, runStoreOptions } from '../../src/storage/runs/run-store.js'
import { sha256 } from '../http/gateway-double.js'
import { startService, type TestService } from '../helpers/service.js'
import { buildWorkbenchPages, axeViolations, chartPatch, signedInPage as signInto } from './pages.js'

/**
 * Adjusting a forecast on the workbench's SKU page, in a real browser (Debian's
 * headless Chromium through playwright-core) against the real service, as
 * test/web/workbench.test.ts does. The demo data is the invented distributor's.
 */

const KEY = 'garden-planner-key-0123456789'
const auth = { authorization: `Bearer ${KEY}` }

let outDir: string
let service: TestService
let baseUrl: string
let browser: Browser

beforeAll(async () => {
  outDir = await buildWorkbenchPages('almanac-web-adjust-')
  service = await startService('web-adjustments', {
    config: { apiKeys: new Map([['garden', [sha256(KEY)]]]), chunkSize: 4, workerConcurrency: 1, rateLimitMax: 10_000 },
    appDeps: ({ redis, prefix, config }) => {
      const runs = new RunStore(redis, runStoreOptions(config))
      return {
        histories: new HistoryStore(redis, { prefix }),
        workbenchRoot: outDir,
        adjustments: createAdjustmentService(config, redis, { latestForecast: (t, s) => runs.latest(t, s) }),
      }
    },
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

/** Waits until the form's outcome line holds `text`, then returns the whole line. */
async function outcome(page: Page, text: string): Promise<string | null> {
  const line = page.getByTestId('adjust-outcome').filter({ hasText: text })
  await line.waitFor()
  return line.textContent()
}


const patch = (page: Page, x: number, y: number) => chartPatch(page, x, y, 3)

describe('adjusting a forecast on the SKU page', () => {
  it('adjusts two periods with a reason: the chart draws the adjusted forecast, the API serves the final values, the trail lists the change', async () => {
    const before = (await service.app.inject({ url: '/v1/skus/GRD-1002/forecast', headers: auth })).json()
    const [p1, p2] = [before.forecast[1], before.forecast[2]] as { period: string; demand: number }[]
    const page = await signedInPage('/app/skus/GRD-1002')
    const chart = page.locator('[data-testid=sku-chart][data-probes]')
    await chart.waitFor()
    expect(await chart.getAttribute('data-adjusted-points')).toBe('0')
    await expect(page.getByTestId('caution').textContent()).resolves.toContain('review before ordering')

    await page.locator(`input[data-period="${p1!.period}"]`).check()
    await page.locator(`input[data-period="${p2!.period}"]`).check()
    await page.getByLabel('Change').selectOption('changePercent')
    await page.getByLabel(/^Percent/).fill('25')
    await page.getByLabel('Reason').fill('garden centre promotion')
    await page.getByLabel('Your name').fill('Dana Planner')
    await page.getByRole('button', { name: 'Adjust', exact: true }).click()
    expect(await outcome(page, 'Adjusted 2 periods')).toBe(`Adjusted 2 periods: ${p1!.period}, ${p2!.period}.`)

    // The page read the forecast again: two adjusted points drawn, in the adjusted colour (palette.ts).
    await page.locator('[data-testid=sku-chart][data-adjusted-points="2"]').waitFor()
    const probes = JSON.parse((await chart.getAttribute('data-probes'))!) as { name: string; x: number; y: number }[]
    const probe = probes.find((q) => q.name === 'adjusted')!
    const pixels = await patch(page, probe.x, probe.y)
    const teal = [0x0f, 0x6b, 0x63]
    expect(pixels.filter((p) => p[3] === 255 && teal.every((v, i) => Math.abs(v - p[i]!) <= 14)).length).toBeGreaterThan(20)

    // The SKU forecast endpoint: statistical demand kept, final = demand x 1.25 on the two periods only.
    const after = (await service.app.inject({ url: '/v1/skus/GRD-1002/forecast', headers: auth })).json()
    const byPeriod = new Map(after.forecast.map((p: { period: string }) => [p.period, p]))
    expect(byPeriod.get(p1!.period)).toMatchObject({ demand: p1!.demand, adjustment: { changePercent: 25, author: 'Dana Planner', reason: 'garden centre promotion' } })
    expect((byPeriod.get(p1!.period) as { finalDemand: number }).finalDemand).toBeCloseTo(p1!.demand * 1.25, 9)
    expect((byPeriod.get(p2!.period) as { finalDemand: number }).finalDemand).toBeCloseTo(p2!.demand * 1.25, 9)
    expect(after.forecast[0]).toMatchObject({ finalDemand: before.forecast[0].demand, adjustment: null })

    // The audit trail on the page.
    const rows = page.locator('[data-testid=adjustment-trail] tbody tr')
    await expect(rows.count()).resolves.toBe(2)
    const text = await rows.allTextContents()
    expect(text.every((t) => t.includes('Dana Planner') && t.includes('garden centre promotion') && t.includes('none → +25%'))).toBe(true)
    expect(text.map((t) => (t.includes(p1!.period) ? p1!.period : t.includes(p2!.period) ? p2!.period : '?')).sort()).toEqual([p1!.period, p2!.period])

    // Removing one puts it back to the statistical demand and adds a trail entry.
    await page.getByRole('button', { name: `Remove the adjustment of ${p1!.period}` }).click()
    expect(await outcome(page, 'Removed')).toBe(`Removed the adjustment of ${p1!.period}.`)
    await page.locator('[data-testid=sku-chart][data-adjusted-points="1"]').waitFor()
    await rows.nth(2).waitFor()
    await expect(rows.count()).resolves.toBe(3)
    expect(await rows.first().textContent()).toContain('removed')
    await page.close()
  })

  it('shows a refused adjustment as an error naming the problem, and stores nothing', async () => {
    const page = await signedInPage('/app/skus/GRD-1003')
    await page.locator('[data-testid=sku-chart][data-probes]').waitFor()
    await page.getByRole('button', { name: 'Adjust', exact: true }).click()
    expect(await outcome(page, 'Choose at least one period.')).toContain('Give a reason.')
    await page.locator('[data-testid=adjustments] input[type=checkbox]').first().check()
    await page.getByLabel('Change').selectOption('setDemand')
    await page.getByLabel('Demand').fill('-5')
    await page.getByLabel('Reason').fill('typo')
    await page.getByLabel('Your name').fill('Dana Planner')
    await page.getByRole('button', { name: 'Adjust', exact: true }).click()
    expect(await outcome(page, 'setDemand: must be at least 0')).toBe('The request body has 1 invalid field (setDemand: must be at least 0)')
    expect(await page.getByLabel('Demand').getAttribute('aria-invalid')).toBe('true')
    const trail = (await service.app.inject({ url: '/v1/skus/GRD-1003/adjustments/trail', headers: auth })).json()
    expect(trail.items).toEqual([])
    await page.close()
  })

  it('has no serious or critical accessibility violations (axe-core) with adjustments and the trail shown', async () => {
    const page = await signedInPage('/app/skus/GRD-1002')
    await page.locator('[data-testid=adjustment-trail]').waitFor()
    await page.locator('summary').click() // the forecast table with its final column too
    const violations = await axeViolations(page)
    expect(violations.filter((v) => v.impact === 'serious' || v.impact === 'critical')).toEqual([])
    await page.close()
  })
})
