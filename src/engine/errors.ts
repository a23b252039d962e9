/** Codes of the engine's input errors; the HTTP layer maps them to problem types. */
export type EngineErrorCode =
  | 'empty-series'
  | 'non-finite-value'
  | 'negative-value'
  | 'series-too-short'
  | 'invalid-option'
  | 'invalid-period'
  | 'not-positive'

/** Bad input to the engine. Carries a code and, where known, the offending field. */
export class EngineInputError extends Error {
  override readonly name = 'EngineInputError'
  constructor(
    readonly code: EngineErrorCode,
    message: string,
    /** Field path relative to the series input, e.g. `demand[3]` or `horizon`. */
    readonly field?: string,
  ) {
    super(message)
  }
}

/**
 * One message form for short input, naming the public model id and what is missing,
 * e.g. `trend-smoothing-additive-season needs 24 periods, has 20`.
 */
export function tooShort(model: string, minimum: number, has: number): EngineInputError {
  return new EngineInputError('series-too-short', `${model} needs ${minimum} periods, has ${has}`)
}
