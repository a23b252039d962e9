import { render } from 'preact'
import { useEffect, useRef, useState } from 'preact/hooks'
import './styles.css'
import { describeError, forgetKey, getJson, onSignedOut, storedKey } from './api'
import { Icon, Mark } from './icons'
import { Overview, RunPage } from './pages/overview'
import { SignIn } from './pages/sign-in'
import { SkuList } from './pages/sku-list'
import { SkuPage } from './pages/sku-page'
import { Upload } from './pages/upload'
import { Worklist } from './pages/worklist'
import { Link, hrefs, useRoute, type Route } from './router'

type Access = { state: 'checking' } | { state: 'failed'; message: string } | { state: 'ready'; keyRequired: boolean }

const TITLES: Record<Route['page'], string> = {
  overview: 'Overview',
  run: 'Run',
  skus: 'SKUs',
  sku: 'SKU',
  upload: 'Upload',
  worklist: 'Worklist',
  'not-found': 'Not found',
}

function Page({ route }: { route: Route }) {
  switch (route.page) {
    case 'overview':
      return <Overview />
    case 'run':
      return <RunPage runId={route.runId} />
    case 'skus':
      return <SkuList query={route.query} />
    case 'sku':
      return <SkuPage sku={route.sku} />
    case 'upload':
      return <Upload />
    case 'worklist':
      return <Worklist kind={route.kind} />
    case 'not-found':
      return (
        <>
          <h1 tabIndex={-1}>Not found</h1>
          <p>
            There is no workbench page at <code>{route.path}</code>. <Link href={hrefs.overview()}>Go to the overview</Link>.
          </p>
        </>
      )
  }
}

function NavLink({ href, current, icon, children }: { href: string; current: boolean; icon: 'overview' | 'list' | 'upload' | 'flag'; children: string }) {
  return (
    <Link href={href} class="nav-link" aria-current={current ? 'page' : undefined}>
      <Icon name={icon} /> {children}
    </Link>
  )
}

function App() {
  const route = useRoute()
  const [access, setAccess] = useState<Access>({ state: 'checking' })
  const [signedIn, setSignedIn] = useState(() => storedKey() !== null)
  const [signInReason, setSignInReason] = useState('')
  const main = useRef<HTMLElement>(null)
  const firstRender = useRef(true)

  useEffect(() => {
    getJson<{ apiKeyRequired: boolean }>('/access').then(
      (a) => setAccess({ state: 'ready', keyRequired: a.apiKeyRequired }),
      (err: unknown) => setAccess({ state: 'failed', message: describeError(err) }),
    )
    return onSignedOut(() => {
      setSignedIn(false)
      setSignInReason('The server did not accept the API key. Sign in again.')
    })
  }, [])

  // After a page change, focus moves to the new page's heading, so keyboard and
  // screen-reader users start at the top of what changed.
  useEffect(() => {
    document.title = `${TITLES[route.page]} · Almanac workbench`
    if (firstRender.current) {
      firstRender.current = false
      return
    }
    requestAnimationFrame(() => main.current?.querySelector<HTMLElement>('h1')?.focus())
  }, [route])

  if (access.state === 'checking') return <p class="boot">Connecting…</p>
  if (access.state === 'failed') {
    return (
      <main id="main" class="boot">
        <h1>Almanac workbench</h1>
        <p class="error" role="alert">
          The server could not be reached: {access.message}
        </p>
      </main>
    )
  }
  if (access.keyRequired && !signedIn) return <SignIn reason={signInReason} onSignedIn={() => setSignedIn(true)} />

  return (
    <>
      <a class="skip-link" href="#main">
        Skip to content
      </a>
      <header class="top-bar">
        <Link href={hrefs.overview()} class="brand">
          <Mark /> Almanac <span class="brand-sub">workbench</span>
        </Link>
        <nav aria-label="Main">
          <NavLink href={hrefs.overview()} current={route.page === 'overview' || route.page === 'run'} icon="overview">
            Overview
          </NavLink>
          <NavLink href={hrefs.skus()} current={route.page === 'skus' || route.page === 'sku'} icon="list">
            SKUs
          </NavLink>
          <NavLink href={hrefs.worklist()} current={route.page === 'worklist'} icon="flag">
            Worklist
          </NavLink>
          <NavLink href={hrefs.upload()} current={route.page === 'upload'} icon="upload">
            Upload
          </NavLink>
        </nav>
        {access.keyRequired ? (
          <button
            type="button"
            class="sign-out"
            onClick={() => {
              forgetKey()
              setSignInReason('')
              setSignedIn(false)
            }}
          >
            Sign out
          </button>
        ) : null}
      </header>
      <main id="main" ref={main} tabIndex={-1}>
        <Page route={route} />
      </main>
      <footer class="foot">
        Forecasts are statistical estimates: review them before they drive orders. API reference at <a href="/docs">/docs</a>.
      </footer>
    </>
  )
}

render(<App />, document.getElementById('root')!)
