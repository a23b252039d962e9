/**
 * Headless Chromium from the system (Debian's `chromium` package) driven by
 * playwright-core, which downloads no browser of its own. A fresh empty profile
 * per launch, removed on close.
 */
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { chromium, type BrowserContext } from 'playwright-core'

export const CHROMIUM_PATH = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium'

/** Flags that work in CI containers (root, no GPU, no network besides loopback). */
const FLAGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
]

export interface Browser {
  readonly context: BrowserContext
  close(): Promise<void>
}

export async function launchBrowser(options: { width?: number; height?: number } = {}): Promise<Browser> {
  const profile = mkdtempSync(join(tmpdir(), 'almanac-chromium-'))
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM_PATH,
    headless: true,
    args: FLAGS,
    viewport: { width: options.width ?? 1280, height: options.height ?? 900 },
    deviceScaleFactor: 1,
    locale: 'en-GB',
    timezoneId: 'UTC',
  })
  return {
    context,
    async close() {
      await context.close().catch(() => undefined)
      rmSync(profile, { recursive: true, force: true })
    },
  }
}
