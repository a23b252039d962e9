/**
 * A small seeded generator so simulated forecast variances are reproducible:
 * mulberry32 (a public-domain 32-bit generator by Tommy Ettinger; from memory) for
 * uniforms and the Box-Muller transform for standard normals.
 */
export interface NormalSource {
  next(): number
}

export function seededNormals(seed: number): NormalSource {
  let state = seed >>> 0
  const uniform = (): number => {
    state = (state + 0x6d2b79f5) >>> 0
    let z = state
    z = Math.imul(z ^ (z >>> 15), z | 1)
    z ^= z + Math.imul(z ^ (z >>> 7), z | 61)
    return ((z ^ (z >>> 14)) >>> 0) / 4294967296
  }
  let spare = NaN
  return {
    next(): number {
      if (!Number.isNaN(spare)) {
        const v = spare
        spare = NaN
        return v
      }
      let u = uniform()
      while (u === 0) u = uniform()
      const r = Math.sqrt(-2 * Math.log(u))
      const theta = 2 * Math.PI * uniform()
      spare = r * Math.sin(theta)
      return r * Math.cos(theta)
    },
  }
}
