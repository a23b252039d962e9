import { mkdtempSync, readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import type { Page } from 'playwright-core'
import type { Browser } from '../../scripts/workbench/browser.js'

/** Builds the workbench pages from web/ with vite into a fresh temporary folder, for one browser test file. */
export async function buildWorkbenchPages(folderPrefix: string): Promise<string> {
  const outDir = mkdtempSync(join(tmpdir(), folderPrefix))
  const { build } = await import('vite')
  await build({
    configFile: fileURLToPath(new URL('../../web/vite.config.ts', import.meta.url)),
    build: { outDir, emptyOutDir: true },
    logLevel: 'silent',
  })
  return outDir
}

/** A fresh tab at `path` that has passed the sign-in form once (the key then lives in its sessionStorage). */
export async function signedInPage(browser: Browser, baseUrl: string, key: string, path = '/app/'): Promise<Page> {
  const page = await browser.context.newPage()
  await page.goto(`${baseUrl}${path}`)
  await page.getByLabel('API key').fill(key)
  await page.getByRole('button', { name: 'Sign in' }).click()
  await page.locator('main h1').first().waitFor()
  return page
}

export type Rgba = readonly [number, number, number, number]

/*
 * Code that runs in the page is passed as text: the tests are type-checked for Node,
 * without the browser's types.
 */

/** The SKU chart's canvas pixels in a square of side 2 * radius + 1 centred on (x, y), in canvas pixels. */
export async function chartPatch(page: Page, x: number, y: number, radius = 3): Promise<Rgba[]> {
  const side = 2 * radius + 1
  return (await page.evaluate(`(() => {
    const canvas = document.querySelector('[data-testid=sku-chart] canvas')
    const data = canvas.getContext('2d').getImageData(${x - radius}, ${y - radius}, ${side}, ${side}).data
    const out = []
    for (let i = 0; i < data.length; i += 4) out.push([data[i], data[i + 1], data[i + 2], data[i + 3]])
    return out
  })()`)) as Rgba[]
}

const axeSource = readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8')

/**
 * The violations axe-core finds on the page as it is now. Evaluated through the debugging
 * protocol, so the page's CSP (script-src 'self') still holds for the page itself.
 */
export async function axeViolations(page: Page): Promise<{ id: string; impact: string; nodes: string[] }[]> {
  await page.evaluate(axeSource)
  return (await page.evaluate(`axe.run().then((result) => result.violations.map((v) => ({
    id: v.id, impact: v.impact, nodes: v.nodes.map((n) => n.target.join(' ')).slice(0, 3),
  })))`)) as { id: string; impact: string; nodes: string[] }[]
}
