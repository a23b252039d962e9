/**
 * How many periods selection holds back, and from how many origins.
 *
 * Default holdout (our rule): base = min(horizon, seasonLength); then reduced so the
 * earliest training part, n - holdout - (origins - 1), still holds T points, where T is
 * the largest training requirement among the candidates that could be trained at all
 * (requirement <= n - origins). The holdout never goes below 1. So a 30-month history
 * keeps 24 months of training for the seasonal models and holds back 6.
 *
 * A holdout given by the caller is kept unless it leaves fewer than 2 training points at
 * the earliest origin; then origins and holdout are reduced (with a warning).
 */
export interface HoldoutPlan {
  readonly holdout: number
  readonly origins: number
  /** Set when the caller's holdout/origins had to be reduced. */
  readonly reduced: boolean
}

export const MIN_TRAINING = 2

/**
 * Rolling origins when the request sets none: the horizon's count (at most `max`) for a
 * frequency without a season, else 1.
 *
 * Without a season the default holdout is one period (min(horizon, seasonLength) = 1), so
 * one origin would rank the candidates on a single error. Rolling the origin back one
 * period at a time gives one one-step error per step of the horizon, about the evidence a
 * seasonal history gets from its season-long holdout (rolling-origin evaluation: Tashman
 * 2000, IJF 16(4), from memory). Decided on the M3 training split (bench/RESULTS.md,
 * "Rolling origins without a season"): yearly OWA 0.900 -> 0.874 and "other" 0.732 -> 0.653,
 * against 0.883 and 0.722 with 3 origins and 0.882 and 0.673 with one holdout of the
 * horizon's length; for seasonal series more origins did not help (monthly 0.897 -> 0.899
 * with 3), so they keep one.
 */
export function defaultHoldoutOrigins(seasonLength: number, horizon: number, max: number): number {
  return seasonLength === 1 ? Math.max(1, Math.min(horizon, max)) : 1
}

export function defaultHoldout(
  n: number,
  horizon: number,
  seasonLength: number,
  origins: number,
  requirements: readonly number[],
): number {
  const base = Math.max(1, Math.min(horizon, seasonLength))
  const trainable = requirements.filter((r) => r <= n - origins)
  const target = Math.max(MIN_TRAINING, ...trainable)
  return Math.max(1, Math.min(base, n - (origins - 1) - target))
}

export function planHoldout(
  n: number,
  horizon: number,
  seasonLength: number,
  requestedHoldout: number | undefined,
  requestedOrigins: number,
  requirements: readonly number[],
): HoldoutPlan {
  let origins = requestedOrigins
  if (requestedHoldout === undefined) {
    while (origins > 1 && n - 1 - (origins - 1) < MIN_TRAINING) origins--
    const holdout = defaultHoldout(n, horizon, seasonLength, origins, requirements)
    return { holdout, origins, reduced: origins !== requestedOrigins }
  }
  let holdout = requestedHoldout
  while (origins > 1 && n - holdout - (origins - 1) < MIN_TRAINING) origins--
  while (holdout > 1 && n - holdout - (origins - 1) < MIN_TRAINING) holdout--
  return { holdout, origins, reduced: holdout !== requestedHoldout || origins !== requestedOrigins }
}
