/**
 * The real service for the workbench scripts (screenshots, bench): `src/server.ts`
 * as `npm start` runs it, with its in-process worker, on a free loopback port and a
 * Redis key prefix of its own (deleted on stop). It serves the built pages in dist/web.
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { createServer } from 'node:net'
import { fileURLToPath } from 'node:url'
import { Redis } from 'ioredis'

const ROOT = fileURLToPath(new URL('../../', import.meta.url))

export interface RunningService {
  readonly baseUrl: string
  readonly prefix: string
  stop(): Promise<void>
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer()
    srv.once('error', reject)
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address() as { port: number }
      srv.close(() => resolve(port))
    })
  })
}

/** Builds the workbench pages into dist/web with vite (as `npm run build` does). */
export async function buildWorkbench(): Promise<void> {
  const { build } = await import('vite')
  await build({ configFile: fileURLToPath(new URL('../../web/vite.config.ts', import.meta.url)), logLevel: 'warn' })
}

async function deleteKeys(redisUrl: string, prefix: string): Promise<void> {
  const redis = new Redis(redisUrl, { maxRetriesPerRequest: 2 })
  try {
    let cursor = '0'
    do {
      const [next, keys] = await redis.scan(cursor, 'MATCH', `${prefix}*`, 'COUNT', 1000)
      if (keys.length > 0) await redis.unlink(...keys)
      cursor = next
    } while (cursor !== '0')
  } finally {
    redis.disconnect()
  }
}

export async function startService(name: string, env: Record<string, string> = {}): Promise<RunningService> {
  const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
  const prefix = `workbench-${name}-${randomBytes(4).toString('hex')}`
  const port = await freePort()
  const child: ChildProcess = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
    cwd: ROOT,
    env: {
      PATH: process.env.PATH ?? '',
      REDIS_URL: redisUrl,
      REDIS_PREFIX: prefix,
      PORT: String(port),
      HOST: '127.0.0.1',
      LOG_LEVEL: 'warn',
      RATE_LIMIT_MAX: '100000',
      ...env,
    },
    stdio: ['ignore', 'ignore', 'pipe'],
  })
  let stderr = ''
  child.stderr!.setEncoding('utf8').on('data', (chunk: string) => (stderr += chunk))
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()))
  const baseUrl = `http://127.0.0.1:${port}`
  const deadline = Date.now() + 30_000
  for (;;) {
    const ready = await fetch(`${baseUrl}/readyz`).then((r) => r.ok, () => false)
    if (ready) break
    if (child.exitCode !== null || Date.now() > deadline) {
      child.kill('SIGKILL')
      throw new Error(`the service did not start: ${stderr.slice(-2000)}`)
    }
    await new Promise((r) => setTimeout(r, 200))
  }
  return {
    baseUrl,
    prefix,
    async stop() {
      child.kill('SIGTERM')
      const timer = setTimeout(() => child.kill('SIGKILL'), 15_000)
      await exited
      clearTimeout(timer)
      await deleteKeys(redisUrl, prefix)
    },
  }
}
