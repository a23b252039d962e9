import { fileURLToPath } from 'node:url'
import { defineConfig } from 'vite'

/**
 * The workbench: built into dist/web and served by the API process at /app/
 * (src/http/plugins/workbench.ts). `npm run build` runs this after the server build.
 */
export default defineConfig({
  root: fileURLToPath(new URL('.', import.meta.url)),
  base: '/app/',
  publicDir: false,
  oxc: { jsx: { runtime: 'automatic', importSource: 'preact' } },
  build: {
    outDir: fileURLToPath(new URL('../dist/web', import.meta.url)),
    emptyOutDir: true,
    target: 'es2022',
    // One script and one stylesheet: the whole workbench is small enough to load at once.
    assetsInlineLimit: 0,
    reportCompressedSize: false,
  },
})
