/**
 * npm run screenshots: builds the workbench, starts the service (`src/server.ts`, its
 * own worker, a fresh Redis key prefix) with the invented demo data, runs a forecast
 * over every demo SKU and writes PNGs of the pages to docs/screenshots/.
 * Needs Redis (REDIS_URL, default redis://127.0.0.1:6379) and Debian's chromium.
 */
import { mkdirSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { WORKLIST_DEMO_SERIES, arriveBiasedActuals, demoSeries, runDemo, uploadDemo } from '../../demo/workbench.js'
import { launchBrowser } from './browser.js'
import { buildWorkbench, startService } from './service.js'

const OUT = fileURLToPath(new URL('../../docs/screenshots/', import.meta.url))
/** A garden item with five years of spring peaks, and a slow-moving workwear item. */
const SEASONAL = 'GRD-1020'
const INTERMITTENT = 'WRK-7003'
/** Steady items whose new actuals run well above their forecasts (the worklist's biased kind). */
const BIASED = ['WRK-3001', 'HTG-2002', 'HTG-2005']

await buildWorkbench()
const service = await startService('screenshots')
const browser = await launchBrowser({ width: 1280, height: 900 })
try {
  // The demo plus a new product and a part with no demand yet, so the worklist has each kind.
  const series = [...demoSeries(), ...WORKLIST_DEMO_SERIES]
  await uploadDemo(service.baseUrl, series)
  const run = await runDemo(service.baseUrl, series.map((s) => s.sku))
  process.stdout.write(`demo run ${run.id}: ${run.status}, ${run.progress.done} of ${run.progress.total} SKUs\n`)
  // Actuals arrive above the forecasts of a few SKUs (biased); the next night's run forecasts every SKU again,
  // and theirs move (a large change).
  for (const sku of BIASED) await arriveBiasedActuals(service.baseUrl, sku)
  const rerun = await runDemo(service.baseUrl, series.map((s) => s.sku))
  process.stdout.write(`next run ${rerun.id}: ${rerun.status}, ${rerun.progress.done} of ${rerun.progress.total} SKUs\n`)
  mkdirSync(OUT, { recursive: true })
  const page = await browser.context.newPage()
  const shoot = async (path: string, ready: string | string[], file: string) => {
    await page.goto(`${service.baseUrl}${path}`)
    for (const r of [ready].flat()) await page.locator(r).first().waitFor({ timeout: 30_000 })
    await page.mouse.move(0, 0)
    await page.screenshot({ path: `${OUT}${file}`, fullPage: true })
    process.stdout.write(`wrote docs/screenshots/${file}\n`)
  }
  await shoot('/app/', ['[data-testid=run-card][data-status=succeeded] [data-testid=model-mix]', '[data-testid=attention]'], 'overview.png')
  await shoot('/app/skus?prefix=GRD-100', '[data-testid=sku-list-status][data-state=done]', 'sku-list.png')
  await shoot(`/app/skus/${SEASONAL}`, '[data-testid=sku-chart][data-probes]', 'sku-seasonal.png')
  await shoot(`/app/skus/${INTERMITTENT}`, '[data-testid=sku-chart][data-probes]', 'sku-intermittent.png')
  await shoot('/app/worklist', '[data-testid=worklist-status][data-state=done]', 'worklist.png')
} finally {
  await browser.close()
  await service.stop()
}
