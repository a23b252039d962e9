import { rmSync } from 'node:fs'
import type { Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { SMALL_DEMO_SKUS, WORKLIST_DEMO_SERIES, arriveBiasedActuals, demoSeries, runDemo, uploadDemo, type DemoRun } from '../../demo/workbench.js'
import { launchBrowser, type Browser } from '../../scripts/workbench/browser.js'
import { AccuracyTrackingHistoryStore } from '../../src/storage/erp/accuracy-hook.js'
import { startService, type TestService } from '../helpers/service.js'
import { buildWorkbenchPages, axeViolations } from './pages.js'

/**
 * The worklist page in a real browser (Debian's Chromium through playwright-core)
 * against the real service with its accuracy services: a demo-like publishing run
 * in which one SKU fails and one is short, then actuals that make one biased.
 */

const BIASED = 'WRK-3001'
const [SHORT, FAILED] = WORKLIST_DEMO_SERIES.map((s) => s.sku) as [string, string]

let outDir: string
let service: TestService
let baseUrl: string
let browser: Browser
let run: DemoRun

beforeAll(async () => {
  outDir = await buildWorkbenchPages('almanac-web-worklist-')
  service = await startService('web-worklist', {
    config: { chunkSize: 4, workerConcurrency: 1, rateLimitMax: 10_000 },
    erp: true,
    appDeps: (ctx) => ({
      histories: new AccuracyTrackingHistoryStore(ctx.redis, { prefix: ctx.prefix }, ctx.erp!.services.accuracy, () => undefined),
      workbenchRoot: outDir,
    }),
  })
  baseUrl = await service.app.listen({ port: 0, host: '127.0.0.1' })
  const series = [...demoSeries(SMALL_DEMO_SKUS), ...WORKLIST_DEMO_SERIES]
  await uploadDemo(baseUrl, series)
  run = await runDemo(baseUrl, series.map((s) => s.sku))
  await arriveBiasedActuals(baseUrl, BIASED)
  browser = await launchBrowser()
  browser.context.setDefaultTimeout(10_000)
}, 180_000)

afterAll(async () => {
  await browser?.close()
  await service?.close()
  if (outDir) rmSync(outDir, { recursive: true, force: true })
})

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- JSON bodies checked by the expectations below
const api = async (path: string): Promise<any> => (await fetch(`${baseUrl}${path}`)).json()

async function openWorklist(path = '/app/worklist'): Promise<Page> {
  const page = await browser.context.newPage()
  await page.goto(`${baseUrl}${path}`)
  await page.locator('[data-testid=worklist-status][data-state=done]').waitFor()
  return page
}

describe('the worklist in the browser', () => {
  it('the overview counts each kind and links to the filtered worklist', async () => {
    expect(run.status).toBe('succeeded')
    expect(run.progress.failed).toBe(1)
    const page = await browser.context.newPage()
    await page.goto(`${baseUrl}/app/`)
    const attention = page.getByTestId('attention')
    await attention.waitFor()
    expect(await attention.locator('[data-kind=biased]').textContent()).toBe('1 SKU')
    expect(await attention.locator('[data-kind=failed]').textContent()).toBe('1 SKU')
    expect(await attention.locator('[data-kind=short-history]').textContent()).toBe('1 SKU')
    await attention.locator('[data-kind=failed]').click()
    await page.waitForURL('**/app/worklist?kind=failed')
    await page.locator('[data-testid=worklist-status][data-state=done]').waitFor()
    expect(await page.locator('[data-testid=worklist-table] tbody tr').evaluateAll((rows) => rows.map((r) => r.getAttribute('data-sku')))).toEqual([FAILED])
    expect(await page.getByLabel('Kind').inputValue()).toBe('failed')
    await page.close()
  })

  it('lists each kind in words with its detail; every row links to its SKU page', async () => {
    const page = await openWorklist()
    const kindsOf = (sku: string) => page.locator(`tr[data-sku="${sku}"] [data-kind]`).evaluateAll((li) => li.map((l) => l.getAttribute('data-kind')))
    expect(await kindsOf(BIASED)).toEqual(['biased'])
    expect(await kindsOf(SHORT)).toEqual(['short-history'])
    expect(await kindsOf(FAILED)).toEqual(['failed'])
    // Text carries each kind (colour is never the only sign).
    expect(await page.locator(`tr[data-sku="${BIASED}"] td`).first().textContent()).toContain('Biased forecast')
    expect(await page.locator(`tr[data-sku="${BIASED}"] td`).first().textContent()).toContain('tracking signal 5.0 over 5 scored periods')
    expect(await page.locator(`tr[data-sku="${SHORT}"] td`).first().textContent()).toContain('6 periods of history')
    expect(await page.locator(`tr[data-sku="${FAILED}"] td`).first().textContent()).toContain('empty-series')
    await page.getByRole('link', { name: SHORT, exact: true }).click()
    await page.waitForURL(`**/app/skus/${SHORT}`)
    await page.close()
  })

  it('acknowledges a SKU with a note from the keyboard, with visible focus; the API then shows the review', async () => {
    const page = await openWorklist()
    await page.getByLabel(`Note for ${BIASED}`).fill('promotion in the spring catalogue')
    await page.keyboard.press('Tab')
    const focused = (await page.evaluate(`(() => {
      const el = document.activeElement
      const style = getComputedStyle(el)
      return { label: el.getAttribute('aria-label'), outline: style.outlineStyle, width: style.outlineWidth }
    })()`)) as { label: string; outline: string; width: string }
    expect(focused).toEqual({ label: `Acknowledge ${BIASED}`, outline: 'solid', width: '3px' })
    await page.keyboard.press('Enter')
    const review = page.locator(`tr[data-sku="${BIASED}"] [data-testid=review]`)
    await review.filter({ hasText: 'Acknowledged' }).waitFor()
    expect(await review.textContent()).toContain('promotion in the spring catalogue')
    const listed = await api('/v1/worklist?kind=biased')
    expect(listed.items).toEqual([expect.objectContaining({ sku: BIASED, review: expect.objectContaining({ state: 'acknowledged', note: 'promotion in the spring catalogue' }) })])
    // The accuracy exception list shows the same review.
    expect((await api('/v1/accuracy/exceptions')).items[0].review).toMatchObject({ state: 'acknowledged', note: 'promotion in the spring catalogue' })
    await page.close()
  })

  it('snoozes a SKU: it leaves the list until "Show snoozed" is ticked', async () => {
    const page = await openWorklist()
    await page.getByRole('button', { name: `Snooze ${SHORT}` }).click()
    await page.locator(`tr[data-sku="${SHORT}"]`).waitFor({ state: 'detached' })
    await page.getByLabel('Show snoozed').check()
    await page.locator(`tr[data-sku="${SHORT}"] [data-testid=review]`).filter({ hasText: 'Snoozed' }).waitFor()
    await page.close()
  })

  it('has no serious or critical accessibility violations (axe-core)', async () => {
    for (const path of ['/app/worklist', '/app/worklist?kind=biased']) {
      const page = await openWorklist(path)
      const violations = await axeViolations(page)
      const bad = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical')
      expect(bad, `${path}: ${JSON.stringify(bad)}`).toEqual([])
      await page.close()
    }
  })
})
