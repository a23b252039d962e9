/**
 * npm run bench:workbench: the workbench's targets (issue 15), measured against the
 * real service (`src/server.ts` with its worker, a fresh Redis key prefix, deleted after)
 * and the built pages in headless Chromium.
 *
 *   1. First-load bundle: index.html and every file it references, gzipped (target <= 250 KB).
 *   2. SKU page with 10 years of weekly history (520 periods, 52 forecast): from navigation
 *      start until the chart is drawn with its data (target within 1 s). Cold = first load
 *      with an empty browser cache; warm = later loads (hashed assets cached).
 *   3. SKU list filter with 100,000 stored SKUs: GET /v1/skus with a prefix, a tag and both
 *      (from this process), and in the page from pressing Enter in the filter to the table
 *      shown (target 300 ms).
 *
 * Options: --skus=100000 --loads=7 --queries=20. Needs Redis (REDIS_URL) and chromium.
 * Medians and maxima are printed; record them in bench/RESULTS.md.
 */
import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { gzipSync } from 'node:zlib'
import { launchBrowser } from '../scripts/workbench/browser.js'
import { buildWorkbench, startService } from '../scripts/workbench/service.js'

const args = new Map(process.argv.slice(2).map((a) => a.replace(/^--/, '').split('=') as [string, string]))
const SKU_COUNT = Number(args.get('skus') ?? 100_000)
const LOADS = Number(args.get('loads') ?? 7)
const QUERIES = Number(args.get('queries') ?? 20)
const WEB = fileURLToPath(new URL('../dist/web/', import.meta.url))

const median = (xs: readonly number[]) => {
  const s = [...xs].sort((a, b) => a - b)
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2
}
const verdict = (ok: boolean) => (ok ? 'met' : 'NOT MET')
const lines: string[] = []
const report = (line: string) => {
  lines.push(line)
  process.stdout.write(`${line}\n`)
}

/** Seeded weekly demand of an invented heating item: winter peaks, noise. */
function weeklyHeatingDemand(weeks: number): number[] {
  let seed = 20_160_104
  const random = () => (seed = (seed * 48271) % 2147483647) / 2147483647
  return Array.from({ length: weeks }, (_, t) =>
    Math.max(0, Math.round(60 + 45 * Math.cos((2 * Math.PI * t) / 52) + 12 * (random() - 0.5) * 2)),
  )
}

async function call(baseUrl: string, path: string, init: RequestInit = {}): Promise<unknown> {
  const r = await fetch(`${baseUrl}${path}`, init)
  const text = await r.text()
  if (!r.ok) throw new Error(`${init.method ?? 'GET'} ${path}: ${r.status} ${text.slice(0, 300)}`)
  return JSON.parse(text)
}

// 1. Bundle
await buildWorkbench()
const html = readFileSync(`${WEB}index.html`, 'utf8')
const referenced = [...html.matchAll(/(?:src|href)="\/app\/([^"]+)"/g)].map((m) => m[1]!)
let firstLoadGz = gzipSync(html, { level: 9 }).length
for (const file of referenced) firstLoadGz += gzipSync(readFileSync(`${WEB}${file}`), { level: 9 }).length
report(`first load: index.html + ${referenced.join(', ')}`)
report(`bundle, gzipped: ${(firstLoadGz / 1024).toFixed(1)} KB (target <= 250 KB): ${verdict(firstLoadGz <= 250 * 1024)}`)

const service = await startService('bench', { RATE_LIMIT_MAX: '1000000', BODY_LIMIT_BYTES: String(256 * 1024 * 1024) })
const browser = await launchBrowser()
try {
  const json = { 'content-type': 'application/json' }
  // 2. SKU page, 10 years weekly
  const sku = 'HTG-2901'
  await call(service.baseUrl, `/v1/skus/${sku}/history`, {
    method: 'PUT',
    headers: json,
    body: JSON.stringify({ frequency: 'week', firstPeriod: '2016-W01', demand: weeklyHeatingDemand(520), tags: ['category:heating'] }),
  })
  const run = (await call(service.baseUrl, '/v1/runs', {
    method: 'POST',
    headers: json,
    body: JSON.stringify({ horizon: 52, frequency: 'week', intervalLevels: [80, 95], scope: { skus: [sku] } }),
  })) as { id: string }
  for (;;) {
    const r = (await call(service.baseUrl, `/v1/runs/${run.id}`)) as { status: string }
    if (r.status !== 'queued' && r.status !== 'running') break
    await new Promise((resolve) => setTimeout(resolve, 200))
  }
  const drawnAt: number[] = []
  for (let i = 0; i < LOADS; i++) {
    const page = await browser.context.newPage()
    await page.goto(`${service.baseUrl}/app/skus/${sku}`)
    await page.locator('[data-testid=sku-chart][data-probes]').waitFor({ timeout: 30_000 })
    const points = await page.locator('[data-testid=sku-chart]').getAttribute('data-history-points')
    if (points !== '520') throw new Error(`expected 520 history points drawn, got ${points}`)
    drawnAt.push((await page.evaluate("performance.getEntriesByName('sku-page-drawn')[0].startTime")) as number)
    await page.close()
  }
  const warm = drawnAt.slice(1)
  report(
    `SKU page, 520 weekly periods + 52 forecast: cold ${drawnAt[0]!.toFixed(0)} ms; warm median ${median(warm).toFixed(0)} ms, ` +
      `max ${Math.max(...warm).toFixed(0)} ms over ${warm.length} loads (target 1000 ms): ${verdict(Math.max(...drawnAt) <= 1000)}`,
  )

  // 3. SKU list at SKU_COUNT stored SKUs
  const categories = ['garden', 'heating', 'workwear']
  const prefixes = ['GRD', 'HTG', 'WRK']
  const uploadStarted = performance.now()
  const batch = 20_000
  for (let start = 0; start < SKU_COUNT; start += batch) {
    const rows: string[] = []
    for (let i = start; i < Math.min(SKU_COUNT, start + batch); i++) {
      const c = i % 3
      const code = `${prefixes[c]}-${String(100_000 + i)}`
      rows.push(JSON.stringify({ sku: code, frequency: 'month', firstPeriod: '2024-01', demand: [3, 5, 4, 6, 5, 7, 6, 8, 7, 9, 8, 10], tags: [`category:${categories[c]}`] }))
    }
    await call(service.baseUrl, '/v1/history?frequency=month', { method: 'POST', headers: { 'content-type': 'application/x-ndjson' }, body: rows.join('\n') })
  }
  report(`stored ${SKU_COUNT.toLocaleString('en')} SKUs in ${((performance.now() - uploadStarted) / 1000).toFixed(1)} s`)

  const queries = [
    ['prefix', '?prefix=HTG-1500&limit=50'],
    ['tag', '?tag=category:workwear&limit=50'],
    ['tag + prefix', '?tag=category:garden&prefix=GRD-1777&limit=50'],
    ['tag, a page deep', '?tag=category:heating&limit=200&cursor='],
  ] as const
  const apiWorst: number[] = []
  for (const [name, q] of queries) {
    let query: string = q
    if (q.endsWith('cursor=')) {
      const first = (await call(service.baseUrl, `/v1/skus?tag=category:heating&limit=1000`)) as { nextCursor: string }
      query = `${q}${encodeURIComponent(first.nextCursor)}`
    }
    const times: number[] = []
    for (let i = 0; i < QUERIES; i++) {
      const t0 = performance.now()
      await call(service.baseUrl, `/v1/skus${query}`)
      times.push(performance.now() - t0)
    }
    apiWorst.push(median(times))
    report(`GET /v1/skus (${name}): median ${median(times).toFixed(1)} ms, max ${Math.max(...times).toFixed(1)} ms over ${QUERIES}`)
  }

  const page = await browser.context.newPage()
  await page.goto(`${service.baseUrl}/app/skus`)
  await page.locator('[data-testid=sku-list-status][data-state=done]').waitFor()
  const filterTimes: number[] = []
  for (let i = 0; i < QUERIES; i++) {
    const prefix = `WRK-1${String(10 + ((i * 37) % 89)).padStart(2, '0')}`
    await page.getByLabel('SKU starts with').fill(prefix)
    await page.getByLabel('SKU starts with').press('Enter')
    await page.locator(`[data-testid=sku-list-status][data-state=done][data-query="${prefix}|"]`).waitFor()
    const rows = await page.locator('[data-testid=sku-table] tbody tr').count()
    if (rows === 0) throw new Error(`no rows for ${prefix}`)
    filterTimes.push(
      (await page.evaluate(
        "performance.getEntriesByName('sku-list-shown').at(-1).startTime - performance.getEntriesByName('sku-list-filter').at(-1).startTime",
      )) as number,
    )
  }
  await page.close()
  report(
    `SKU list filter in the page (Enter to table shown): median ${median(filterTimes).toFixed(0)} ms, ` +
      `max ${Math.max(...filterTimes).toFixed(0)} ms over ${QUERIES} (target 300 ms): ${verdict(Math.max(...filterTimes) <= 300 && Math.max(...apiWorst) <= 300)}`,
  )
} finally {
  await browser.close()
  await service.stop()
}
