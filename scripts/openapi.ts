/**
 * Writes openapi/openapi.json from the zod route schemas (`npm run openapi`),
 * then the client types generated from it (test/client/almanac-api.ts).
 * Needs no Redis: the app is built with a gateway that is never called.
 * test/http/openapi.test.ts fails when either committed file drifts.
 */
import { mkdirSync, writeFileSync } from 'node:fs'
import { dirname } from 'node:path'
import { fileURLToPath } from 'node:url'
import { renderOpenApiDocument } from '../src/http/openapi-document.js'
import { renderClientTypes } from './client-types.js'

const write = (relative: string, text: string) => {
  const target = fileURLToPath(new URL(relative, import.meta.url))
  mkdirSync(dirname(target), { recursive: true })
  writeFileSync(target, text)
  process.stdout.write(`wrote ${relative.replace('../', '')}\n`)
}

const doc = await renderOpenApiDocument()
write('../openapi/openapi.json', doc)
write('../test/client/almanac-api.ts', await renderClientTypes(doc))
