/**
 * Seeded random numbers for invented data (demo files, benchmark series): the
 * same seed gives the same sequence on every machine and Node version.
 */

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

/** A standard normal draw from two uniforms of `random` (Box-Muller, cosine branch). */
export function normalDraw(random: () => number): number {
  const u = Math.max(random(), 1e-12)
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random())
}
