/**
 * Seeded synthetic monthly demand series for the engine speed benchmark.
 * Shapes cycle through level, trend, seasonal, seasonal-trend and intermittent,
 * so every model family gets work. Invented data, for timing only.
 */

export const SHAPES = ['level', 'trend', 'seasonal', 'seasonal-trend', 'intermittent'] as const
export type Shape = (typeof SHAPES)[number]

/** mulberry32: small seeded PRNG with uniform output in [0, 1). */
export function createRandom(seed: number): () => number {
  let state = seed >>> 0
  return () => {
    state = (state + 0x6d2b79f5) >>> 0
    let t = state
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

function normal(random: () => number): number {
  const u = Math.max(random(), 1e-12)
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random())
}

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
    const shape = SHAPES[i % SHAPES.length]
    return { shape, values: syntheticSeries(random, shape, length) }
  })
}
