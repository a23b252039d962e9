// Entry of the body pool's threads when the service runs from source (tests,
// benchmarks; pool.ts picks it): Node cannot load TypeScript on a thread by
// itself, so this registers tsx's loader first and then loads the TypeScript
// task. Production runs the compiled task (dist/) without a loader.
import { register } from 'tsx/esm/api'

register()
const mod = await import('./run-body-thread.ts')
export default mod.default
