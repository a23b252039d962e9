import { mkdtempSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'

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
