/**
 * npm run screenshots: builds the workbench, starts the service (`src/server.ts`, its
 * own worker, a fresh Redis key prefix) with the invented demo data, runs a forecast
 * over every demo SKU and writes PNGs of the pages to docs/screenshots/.
 * Needs Redis (REDIS_URL, default redis://127.0.0.1:6379) and Debian's chromium.
 */
import { mkdirSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { demoSeries, runDemo, uploadDemo } from '../../demo/workbench.js'
import { launchBrowser } from './browser.js'
import { buildWorkbench, startService } from './service.js'

const OUT = fileURLToPath(new URL('../../docs/screenshots/', import.meta.url))
/** A garden item with five years of spring peaks, and a slow-moving workwear item. */
const SEASONAL = 'GRD-1020'
const INTERMITTENT = 'WRK-7003'

await buildWorkbench()
const service = await startService('screenshots')
const browser = await launchBrowser({ width: 1280, height: 900 })
try {
  const series = demoSeries()
  await uploadDemo(service.baseUrl, series)
  const run = await runDemo(service.baseUrl, series.map((s) => s.sku))
  process.stdout.write(`demo run ${run.id}: ${run.status}, ${run.progress.done} of ${run.progress.total} SKUs\n`)
  mkdirSync(OUT, { recursive: true })
  const page = await browser.context.newPage()
  const shoot = async (path: string, ready: string, file: string) => {
    await page.goto(`${service.baseUrl}${path}`)
    await page.locator(ready).first().waitFor({ timeout: 30_000 })
    await page.mouse.move(0, 0)
    await page.screenshot({ path: `${OUT}${file}`, fullPage: true })
    process.stdout.write(`wrote docs/screenshots/${file}\n`)
  }
  await shoot('/app/', '[data-testid=run-card][data-status=succeeded] [data-testid=model-mix]', 'overview.png')
  await shoot('/app/skus?prefix=GRD-100', '[data-testid=sku-list-status][data-state=done]', 'sku-list.png')
  await shoot(`/app/skus/${SEASONAL}`, '[data-testid=sku-chart][data-probes]', 'sku-seasonal.png')
  await shoot(`/app/skus/${INTERMITTENT}`, '[data-testid=sku-chart][data-probes]', 'sku-intermittent.png')
} finally {
  await browser.close()
  await service.stop()
}
