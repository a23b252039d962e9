import { spawn, type ChildProcess } from 'node:child_process'
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { Cluster, Redis } from 'ioredis'
import { freePort, until, untilRedisAnswers } from './processes.js'

/**
 * A private Redis Cluster of `primaries` redis-server processes on 127.0.0.1
 * (no replicas, no persistence), built from the machine's redis-server: each
 * node starts with cluster-enabled, the test assigns the 16384 slots in equal
 * ranges (CLUSTER ADDSLOTS) and introduces the nodes (CLUSTER MEET), then
 * waits until every node reports cluster_state:ok.
 *
 *   const cluster = await PrivateRedisCluster.start(3)
 *   cluster.nodes          // [{ host: '127.0.0.1', port }, ...]
 *   await cluster.destroy()
 *
 * Fails with a message naming redis-server when it is not installed (never skips).
 */

const SLOTS = 16384

/** A free port whose cluster bus port (port + 10000) is free as well. */
async function freeNodePort(): Promise<number> {
  for (let i = 0; i < 50; i++) {
    const port = await freePort()
    if (port + 10000 <= 65535 && (await isFree(port + 10000))) return port
  }
  throw new Error('no free port pair (port, port + 10000) for a cluster node')
}

function isFree(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const srv = createServer()
    srv.once('error', () => resolve(false))
    srv.listen(port, '127.0.0.1', () => srv.close(() => resolve(true)))
  })
}

interface Node {
  readonly port: number
  readonly proc: ChildProcess
  readonly exited: Promise<unknown>
}

export class PrivateRedisCluster {
  private constructor(
    private readonly members: readonly Node[],
    readonly dir: string,
  ) {}

  /** Seed nodes, in the shape config.redisClusterNodes has. */
  get nodes(): { host: string; port: number }[] {
    return this.members.map((m) => ({ host: '127.0.0.1', port: m.port }))
  }

  /** The REDIS_CLUSTER_NODES value for these nodes. */
  get nodesEnv(): string {
    return this.nodes.map((n) => `${n.host}:${n.port}`).join(',')
  }

  static async start(primaries = 3, bin = process.env.REDIS_SERVER_BIN ?? 'redis-server'): Promise<PrivateRedisCluster> {
    const dir = mkdtempSync(join(tmpdir(), 'almanac-cluster-'))
    const members: Node[] = []
    const cluster = new PrivateRedisCluster(members, dir)
    try {
      for (let i = 0; i < primaries; i++) members.push(await startNode(bin, await freeNodePort(), dir, i))
      await cluster.form()
      return cluster
    } catch (err) {
      await cluster.destroy()
      throw err
    }
  }

  /** A cluster client for checks from the test (close it with disconnect()). */
  client(): Cluster {
    return new Cluster(this.nodes, { redisOptions: { maxRetriesPerRequest: 2 } })
  }

  /** Every primary's keys matching `pattern` (SCAN runs per node on a cluster). */
  async keysPerNode(pattern: string): Promise<string[][]> {
    return Promise.all(
      this.members.map(async (m) => {
        const r = new Redis(m.port, '127.0.0.1', { maxRetriesPerRequest: 1 })
        try {
          const keys: string[] = []
          let cursor = '0'
          do {
            const [next, batch] = await r.scan(cursor, 'MATCH', pattern, 'COUNT', 1000)
            cursor = next
            keys.push(...batch)
          } while (cursor !== '0')
          return keys
        } finally {
          r.disconnect()
        }
      }),
    )
  }

  /** Stops every node at once (SIGKILL: nothing to save) and removes the data directory. */
  async destroy(): Promise<void> {
    for (const m of this.members) m.proc.kill('SIGKILL')
    await Promise.all(this.members.map((m) => m.exited))
    rmSync(this.dir, { recursive: true, force: true })
  }

  private async form(): Promise<void> {
    const clients = this.members.map((m) => new Redis(m.port, '127.0.0.1', { maxRetriesPerRequest: 1 }))
    try {
      const per = Math.ceil(SLOTS / clients.length)
      await Promise.all(
        clients.map((c, i) => {
          const slots = Array.from({ length: Math.min(per, SLOTS - i * per) }, (_, j) => i * per + j)
          return c.call('CLUSTER', 'ADDSLOTS', ...slots.map(String))
        }),
      )
      for (const m of this.members.slice(1)) await clients[0]!.call('CLUSTER', 'MEET', '127.0.0.1', String(m.port))
      await until(
        async () => {
          const infos = await Promise.all(clients.map((c) => c.call('CLUSTER', 'INFO') as Promise<string>))
          return infos.every((info) => /cluster_state:ok/.test(info) && new RegExp(`cluster_known_nodes:${clients.length}\\b`).test(info))
            ? true
            : undefined
        },
        20_000,
        'the private Redis Cluster to report cluster_state:ok on every node',
      )
    } finally {
      for (const c of clients) c.disconnect()
    }
  }
}

async function startNode(bin: string, port: number, root: string, index: number): Promise<Node> {
  const dir = join(root, `node-${index}`)
  mkdirSync(dir) // a directory per node: each writes its own nodes.conf
  const args = ['--port', String(port), '--bind', '127.0.0.1', '--cluster-enabled', 'yes', '--cluster-config-file', 'nodes.conf']
  args.push('--cluster-node-timeout', '5000', '--dir', dir, '--save', '', '--appendonly', 'no', '--protected-mode', 'no')
  const proc = spawn(bin, args, { stdio: ['ignore', 'ignore', 'pipe'] })
  const exited = new Promise((resolve) => proc.once('exit', resolve))
  let stderr = ''
  proc.stderr!.setEncoding('utf8').on('data', (text: string) => (stderr += text))
  const early = exited.then((code) => {
    throw new Error(`redis-server (cluster node, port ${port}) exited (${String(code)}): ${stderr.trim() || 'no output'}`)
  })
  early.catch(() => undefined)
  const spawnError = new Promise<never>((_, reject) =>
    proc.once('error', (err: NodeJS.ErrnoException) =>
      reject(
        new Error(
          err.code === 'ENOENT'
            ? `The Redis Cluster test needs redis-server on PATH (or REDIS_SERVER_BIN): ${bin} was not found`
            : `could not start ${bin}: ${err.message}`,
        ),
      ),
    ),
  )
  spawnError.catch(() => undefined)
  const ready = untilRedisAnswers(`redis://127.0.0.1:${port}`, `redis-server (cluster node) on port ${port}`)
  await Promise.race([ready, spawnError, early])
  return { port, proc, exited }
}
