import { useEffect, useState } from 'preact/hooks'

export type Loaded<T> =
  | { readonly state: 'loading' }
  | { readonly state: 'failed'; readonly error: unknown }
  | { readonly state: 'done'; readonly value: T }

/** Runs `load` when `deps` change; a newer load wins over a slower older one. */
export function useAsync<T>(load: (signal: AbortSignal) => Promise<T>, deps: readonly unknown[]): Loaded<T> {
  const [loaded, setLoaded] = useState<Loaded<T>>({ state: 'loading' })
  useEffect(() => {
    const controller = new AbortController()
    setLoaded({ state: 'loading' })
    load(controller.signal).then(
      (value) => !controller.signal.aborted && setLoaded({ state: 'done', value }),
      (error: unknown) => !controller.signal.aborted && setLoaded({ state: 'failed', error }),
    )
    return () => controller.abort()
  }, deps)
  return loaded
}
