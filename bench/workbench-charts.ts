/**
 * Chart libraries for the workbench, compared on what the SKU page needs: 520 weekly
 * history points, 52 forecast points and two filled bands on a canvas.
 *   npm run bench:chart-choice
 * Each candidate is bundled alone by vite (minified IIFE) and gzipped; then drawn 15
 * times in headless Chromium (fresh chart each time), timed from the call until the
 * page's next task (the drawing is done by then: all three draw synchronously or in a
 * microtask). Candidates that are not installed are skipped (ECharts is not a
 * dependency: `npm install --no-save echarts` to include it).
 */
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { gzipSync } from 'node:zlib'
import { build } from 'vite'
import { launchBrowser } from '../scripts/workbench/browser.js'

const ROOT = fileURLToPath(new URL('../', import.meta.url))
const CANDIDATES = [
  { name: 'uPlot (the workbench chart)', entry: 'uplot.ts', pkg: 'uplot' },
  { name: 'Chart.js', entry: 'chartjs.ts', pkg: 'chart.js' },
  { name: 'ECharts (core, line, canvas)', entry: 'echarts.ts', pkg: 'echarts' },
]
const DRAWS = 15

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b)
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2
}

async function bundle(entry: string): Promise<{ js: string; css: string }> {
  const outDir = mkdtempSync(join(tmpdir(), 'almanac-chart-'))
  try {
    await build({
      configFile: false,
      logLevel: 'silent',
      root: ROOT,
      oxc: { jsx: { runtime: 'automatic', importSource: 'preact' } },
      // As an app build would: libraries drop their development checks.
      define: { 'process.env.NODE_ENV': JSON.stringify('production') },
      build: {
        outDir,
        lib: { entry: join(ROOT, 'bench/workbench-charts', entry), formats: ['iife'], name: 'candidate', fileName: () => 'chart.js' },
        minify: true,
        cssCodeSplit: false,
      },
    })
    const files = readdirSync(outDir)
    const css = files.find((f) => f.endsWith('.css'))
    return { js: readFileSync(join(outDir, 'chart.js'), 'utf8'), css: css ? readFileSync(join(outDir, css), 'utf8') : '' }
  } finally {
    rmSync(outDir, { recursive: true, force: true })
  }
}

// Plain JavaScript text: functions handed to page.evaluate from a tsx script would carry its helpers.
const TIMING = `(async () => {
  const nextTask = () => new Promise((resolve) => {
    const ch = new MessageChannel()
    ch.port1.onmessage = () => resolve()
    ch.port2.postMessage(null)
  })
  const el = document.getElementById('chart')
  const out = []
  for (let k = 0; k < DRAWS; k++) {
    const t0 = performance.now()
    const destroy = window.draw(el)
    await nextTask()
    out.push(performance.now() - t0)
    if (!el.querySelector('canvas')) throw new Error('no canvas drawn')
    destroy()
  }
  return out
})()`

const browser = await launchBrowser()
const rows: string[] = []
try {
  for (const c of CANDIDATES) {
    if (!existsSync(join(ROOT, 'node_modules', c.pkg, 'package.json'))) {
      rows.push(`| ${c.name} | not installed | | |`)
      continue
    }
    const version = (JSON.parse(readFileSync(join(ROOT, 'node_modules', c.pkg, 'package.json'), 'utf8')) as { version: string }).version
    const { js, css } = await bundle(c.entry)
    const gz = gzipSync(js + css, { level: 9 }).length
    const page = await browser.context.newPage()
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.setContent('<!doctype html><div id="chart" style="width:1000px"></div>')
    if (css) await page.addStyleTag({ content: css })
    await page.addScriptTag({ content: js })
    if (errors.length > 0) throw new Error(`${c.name}: ${errors.join('; ')}`)
    const times = (await page.evaluate(TIMING.replace('DRAWS', String(DRAWS)))) as number[]
    await page.close()
    rows.push(
      `| ${c.name} ${version} | ${(gz / 1024).toFixed(1)} KB | ${times[0]!.toFixed(1)} ms | ${median(times.slice(1)).toFixed(1)} ms |`,
    )
  }
} finally {
  await browser.close()
}
process.stdout.write(
  `520 weekly history points + 52 forecast points with 80% and 95% bands, 1000 x 340 px canvas\n\n` +
    `| library | bundle (min + gzip) | first draw | median of next ${DRAWS - 1} draws |\n|---|---|---|---|\n${rows.join('\n')}\n`,
)
