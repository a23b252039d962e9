import type { UploadStaging } from '../../history/staged-upload.js'
import type { RedisClient } from '../redis.js'

/**
 * Seconds a staged part outlives its last append: an upload that is still
 * arriving renews it with every spill; one whose process died is gone after this.
 */
export const STAGING_TTL_SECONDS = 3600

/**
 * An upload's staging area in Redis: one list per part, `hist:{T}:stage:<upload>:<part>`
 * under the tenant's history keys (one hash tag, so a pipeline over the parts stays on
 * one slot of a cluster). Each list holds the part's text chunks in append order.
 */
export class RedisUploadStaging implements UploadStaging {
  constructor(
    private readonly redis: RedisClient,
    /** The key of one part of this upload. */
    private readonly key: (part: number) => string,
  ) {}

  async append(chunks: ReadonlyMap<number, string>): Promise<void> {
    const pipeline = this.redis.pipeline()
    for (const [part, chunk] of chunks) pipeline.rpush(this.key(part), chunk).expire(this.key(part), STAGING_TTL_SECONDS)
    const results = (await pipeline.exec()) ?? []
    const failed = results.find(([err]) => err !== null)
    if (failed) throw failed[0]
  }

  async read(part: number): Promise<string[]> {
    return this.redis.lrange(this.key(part), 0, -1)
  }

  async discard(parts: readonly number[]): Promise<void> {
    if (parts.length === 0) return
    const pipeline = this.redis.pipeline()
    for (const part of parts) pipeline.unlink(this.key(part))
    await pipeline.exec()
  }
}
