/** The engine's public surface. Other layers import the engine only from here. */
export * from './types.js'
export { EngineInputError, type EngineErrorCode } from './errors.js'
