// Entry of the sandboxed chunk processor when the service runs from source
// (tests, benchmarks; worker.ts picks it): BullMQ imports this file on a worker
// thread, where Node cannot load TypeScript by itself, so it registers tsx's
// loader first and then loads the TypeScript processor. Production runs the
// compiled processor (dist/queue/processors/chunk.js) without any loader.
import { register } from 'tsx/esm/api'

register()
const mod = await import('./chunk.ts')
export default mod.default
