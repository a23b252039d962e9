import { useState } from 'preact/hooks'
import { ApiError, describeError, request, storeKey } from '../api'
import { Icon } from '../icons'

/** Asks for the API key once; it is kept in this browser session only (sessionStorage). */
export function SignIn({ reason, onSignedIn }: { reason: string; onSignedIn: () => void }) {
  const [key, setKey] = useState('')
  const [problem, setProblem] = useState('')
  const [busy, setBusy] = useState(false)

  const onSubmit = async (e: Event) => {
    e.preventDefault()
    const typed = key.trim()
    if (!typed) {
      setProblem('Type your API key.')
      return
    }
    setBusy(true)
    try {
      // Any cheap authenticated call tells whether the key is valid.
      await request('/v1/skus?limit=1', { key: typed })
      storeKey(typed)
      onSignedIn()
    } catch (err) {
      if (err instanceof ApiError && err.status !== 401) {
        // Any answer but 401 means the key passed the check (the listing itself may be unavailable).
        storeKey(typed)
        onSignedIn()
        return
      }
      setProblem(err instanceof ApiError ? 'This key was not accepted.' : describeError(err))
    } finally {
      setBusy(false)
    }
  }

  return (
    <main id="main" class="sign-in">
      <h1 tabIndex={-1}>Sign in</h1>
      {reason ? <p class="notice">{reason}</p> : null}
      <form onSubmit={(event) => void onSubmit(event)} class="card">
        <label for="api-key">
          <Icon name="key" /> API key
        </label>
        <input
          id="api-key"
          type="password"
          autocomplete="off"
          value={key}
          onInput={(e) => setKey((e.target as HTMLInputElement).value)}
          aria-describedby="api-key-help"
          aria-invalid={problem ? true : undefined}
        />
        <p id="api-key-help" class="small muted">
          Kept for this browser tab’s session only, and sent to this server alone.
        </p>
        {problem ? (
          <p class="error" role="alert">
            {problem}
          </p>
        ) : null}
        <button type="submit" class="primary" disabled={busy}>
          {busy ? 'Checking…' : 'Sign in'}
        </button>
      </form>
    </main>
  )
}
