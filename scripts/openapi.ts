/**
 * Writes openapi/openapi.json from the zod route schemas (`npm run openapi`).
 * Needs no Redis: the app is built with a gateway that is never called.
 * test/http/openapi.test.ts fails when the committed file drifts.
 */
import { mkdirSync, writeFileSync } from 'node:fs'
import { dirname } from 'node:path'
import { fileURLToPath } from 'node:url'
import { renderOpenApiDocument } from '../src/http/openapi-document.js'

const target = fileURLToPath(new URL('../openapi/openapi.json', import.meta.url))
mkdirSync(dirname(target), { recursive: true })
writeFileSync(target, await renderOpenApiDocument())
process.stdout.write(`wrote ${target}\n`)
