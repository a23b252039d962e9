import { existsSync, statSync } from 'node:fs'
import { dirname, join, resolve, sep } from 'node:path'
import { fileURLToPath } from 'node:url'
import fastifyStatic from '@fastify/static'
import type { FastifyPluginAsync, FastifyReply } from 'fastify'
import { ProblemError } from '../../errors.js'

/** URL prefix of the planner's workbench (the browser pages). */
export const WORKBENCH_PREFIX = '/app/'

export interface WorkbenchOptions {
  /** Folder of the built pages (vite's output); null or missing: /app/ answers 503 saying how to build it. */
  readonly root: string | null
}

/**
 * The built workbench lies in dist/web under the package root. The root is found by
 * walking up from this file, so the same code works from src/ (tsx) and from compiled output.
 */
export function defaultWorkbenchRoot(from: string = fileURLToPath(import.meta.url)): string | null {
  let dir = dirname(from)
  for (;;) {
    if (existsSync(join(dir, 'package.json'))) return join(dir, 'dist', 'web')
    const up = dirname(dir)
    if (up === dir) return null
    dir = up
  }
}

/** True when `path` (relative, from the URL) names a file inside `root`. */
function isFileUnder(root: string, path: string): boolean {
  const full = resolve(root, path)
  if (!full.startsWith(root + sep)) return false
  try {
    return statSync(full).isFile()
  } catch {
    return false
  }
}

// The page loads only its own scripts and styles and talks only to this origin.
const PAGE_HEADERS = {
  'content-security-policy':
    "default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; connect-src 'self'; " +
    "frame-ancestors 'none'; base-uri 'self'; form-action 'self'",
  'x-content-type-options': 'nosniff',
  'referrer-policy': 'no-referrer',
} as const

/**
 * Serves the workbench at /app/: built files as they are (hashed names under assets/ are
 * cached for a year), and index.html for every other /app/ path so deep links such as
 * /app/skus/GRD-1001 open the page, which then routes in the browser.
 * The files are public (the page asks for the API key itself) and do not count against
 * a tenant's request budget.
 */
const workbench: FastifyPluginAsync<WorkbenchOptions> = async (app, opts) => {
  const root = opts.root !== null && existsSync(join(opts.root, 'index.html')) ? resolve(opts.root) : null
  if (root !== null) await app.register(fastifyStatic, { root, serve: false })

  const open = { auth: false, rateLimit: false } as const
  const sendPage = (reply: FastifyReply) => {
    if (root === null) {
      throw new ProblemError('not-ready', 'The workbench is not built on this server: run npm run build')
    }
    // no-cache: a new build's index.html (naming new asset files) is picked up at once.
    reply.headers({ ...PAGE_HEADERS, 'cache-control': 'no-cache' })
    return reply.sendFile('index.html', root, { cacheControl: false })
  }

  app.get('/app', { config: open, schema: { hide: true } }, async (_request, reply) => reply.redirect(WORKBENCH_PREFIX, 301))
  app.get(`${WORKBENCH_PREFIX}*`, { config: open, schema: { hide: true } }, async (request, reply) => {
    const path = (request.params as { '*': string })['*']
    if (root !== null && path !== 'index.html' && isFileUnder(root, path)) {
      reply.header('x-content-type-options', 'nosniff')
      const hashed = path.startsWith('assets/')
      return reply.sendFile(path, root, hashed ? { maxAge: 365 * 24 * 3600 * 1000, immutable: true } : { maxAge: 0 })
    }
    // A missing asset is a 404; any other path is a page of the workbench.
    if (path.startsWith('assets/')) throw new ProblemError('not-found', `No workbench file ${path}`)
    return sendPage(reply)
  })
}

export default workbench
