// Entry of the sandboxed chunk processor. BullMQ imports this file on a worker
// thread; Node cannot load TypeScript there by itself, so it registers tsx's
// loader first (the service runs from source under tsx) and then loads the
// TypeScript processor.
import { register } from 'tsx/esm/api'

register()
const mod = await import('./chunk.ts')
export default mod.default
