/**
 * Seeded synthetic monthly demand series for the engine speed benchmark.
 * Shapes cycle through level, trend, seasonal, seasonal-trend and intermittent,
 * so every model family gets work. Invented data, for timing only.
 */
import { createRandom, normalDraw as normal } from '../scripts/seeded-random.js'

export { createRandom }

export const SHAPES = ['level', 'trend', 'seasonal', 'seasonal-trend', 'intermittent'] as const
export type Shape = (typeof SHAPES)[number]

export function syntheticSeries(random: () => number, shape: Shape, length: number): number[] {
  const level = 20 + 480 * random()
  const noise = 0.05 + 0.15 * random()
  const slope = (random() - 0.3) * 0.02 * level
  const amplitude = 0.2 + 0.6 * random()
  const phase = Math.floor(12 * random())
  const values: number[] = []
  if (shape === 'intermittent') {
    const chance = 0.15 + 0.35 * random()
    const size = 1 + 9 * random()
    for (let t = 0; t < length; t++) values.push(random() < chance ? Math.max(1, Math.round(size * (1 + 0.5 * normal(random)))) : 0)
    return values
  }
  for (let t = 0; t < length; t++) {
    const trend = shape === 'trend' || shape === 'seasonal-trend' ? slope * t : 0
    const season = shape === 'seasonal' || shape === 'seasonal-trend' ? 1 + amplitude * Math.sin((2 * Math.PI * (t + phase)) / 12) : 1
    const value = (level + trend) * season * (1 + noise * normal(random))
    values.push(Math.max(0, Math.round(value * 10) / 10))
  }
  return values
}

export function syntheticSet(seed: number, count: number, length: number): { shape: Shape; values: number[] }[] {
  const random = createRandom(seed)
  return Array.from({ length: count }, (_, i) => {
    const shape = SHAPES[i % SHAPES.length]!
    return { shape, values: syntheticSeries(random, shape, length) }
  })
}
