import { useEffect, useState } from 'preact/hooks'
import { request } from './api'
import { FINISHED_STATUSES, type Run } from './types'

/** How often an unfinished run is asked for; answers are 304 while nothing changed. */
export const POLL_INTERVAL_MS = 1000

export interface RunPoll {
  readonly run: Run | null
  readonly error: unknown
  /** Answers so far that were 304 Not Modified (the run had not changed). */
  readonly unchanged: number
}

/**
 * Follows a run: GET /v1/runs/{id} with If-None-Match, every POLL_INTERVAL_MS
 * until it has finished; paused while the tab is hidden.
 */
export function useRunPoll(runId: string | null): RunPoll {
  const [poll, setPoll] = useState<RunPoll>({ run: null, error: null, unchanged: 0 })
  useEffect(() => {
    setPoll({ run: null, error: null, unchanged: 0 })
    if (runId === null) return
    const controller = new AbortController()
    let etag: string | null = null
    let timer: ReturnType<typeof setTimeout> | undefined
    let unchanged = 0
    let last: Run | null = null
    const tick = async () => {
      if (document.hidden) {
        timer = setTimeout(tick, POLL_INTERVAL_MS)
        return
      }
      try {
        const answer = await request<Run>(`/v1/runs/${encodeURIComponent(runId)}`, { etag, signal: controller.signal })
        if (answer.notModified) unchanged += 1
        else {
          etag = answer.etag
          last = answer.body
        }
        setPoll({ run: last, error: null, unchanged })
        if (last && FINISHED_STATUSES.includes(last.status)) return
      } catch (error) {
        if (controller.signal.aborted) return
        setPoll({ run: last, error, unchanged })
      }
      timer = setTimeout(tick, POLL_INTERVAL_MS)
    }
    void tick()
    return () => {
      controller.abort()
      clearTimeout(timer)
    }
  }, [runId])
  return poll
}

const FOLLOWED_ITEM = 'almanac.followedRuns'

/** Run ids this browser session follows (opened by link or by id). */
export function followedRuns(): string[] {
  try {
    const list: unknown = JSON.parse(sessionStorage.getItem(FOLLOWED_ITEM) ?? '[]')
    return Array.isArray(list) ? list.filter((id): id is string => typeof id === 'string' && /^[A-Za-z0-9_-]{1,100}$/.test(id)) : []
  } catch {
    return []
  }
}

export function followRun(runId: string): string[] {
  const list = [runId, ...followedRuns().filter((id) => id !== runId)].slice(0, 10)
  sessionStorage.setItem(FOLLOWED_ITEM, JSON.stringify(list))
  return list
}

export function unfollowRun(runId: string): string[] {
  const list = followedRuns().filter((id) => id !== runId)
  sessionStorage.setItem(FOLLOWED_ITEM, JSON.stringify(list))
  return list
}
