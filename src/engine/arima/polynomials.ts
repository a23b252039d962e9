/**
 * Lag polynomials of seasonal ARIMA (Box and Jenkins 1970; notation of Hyndman and
 * Khandakar 2008). Coefficient arrays start at lag 1; the lag-0 coefficient is 1.
 *   AR:  phi(B) Phi(B^m) = 1 - sum a_j B^j   (we store a_j, the "phi" signs)
 *   MA:  theta(B) Theta(B^m) = 1 + sum b_j B^j
 */

/** Expands (1 - sum x_i B^i)(1 - sum X_i B^{m i}) into 1 - sum a_j B^j; returns a. */
export function expandAr(ar: readonly number[], seasonalAr: readonly number[], m: number): number[] {
  return expand(ar, seasonalAr, m, -1)
}

/** Expands (1 + sum x_i B^i)(1 + sum X_i B^{m i}) into 1 + sum b_j B^j; returns b. */
export function expandMa(ma: readonly number[], seasonalMa: readonly number[], m: number): number[] {
  return expand(ma, seasonalMa, m, 1)
}

function expand(x: readonly number[], seasonal: readonly number[], m: number, sign: number): number[] {
  const p = x.length + m * seasonal.length
  // full polynomial with lag-0 term 1 and signed coefficients
  const left = [1, ...x.map((v) => sign * v)]
  const right = new Array<number>(m * seasonal.length + 1).fill(0)
  right[0] = 1
  seasonal.forEach((v, i) => (right[m * (i + 1)] = sign * v))
  const out = new Array<number>(p + 1).fill(0)
  for (let i = 0; i < left.length; i++) for (let j = 0; j < right.length; j++) out[i + j]! += left[i]! * right[j]!
  return out.slice(1).map((v) => sign * v)
}

/**
 * Whether 1 - sum a_j z^j has every root outside the unit circle (stationary AR or, with
 * a_j = -b_j, invertible MA), by the step-down (Schur-Cohn / Durbin-Levinson in reverse)
 * recursion: every reflection coefficient must lie strictly inside (-1, 1).
 */
export function rootsOutsideUnitCircle(a: readonly number[]): boolean {
  let c = a.slice()
  while (c.length > 0 && c[c.length - 1] === 0) c.pop()
  for (let k = c.length; k >= 1; k--) {
    const kappa = c[k - 1]!
    if (!(Math.abs(kappa) < 1 - 1e-8)) return false
    const next = new Array<number>(k - 1)
    const d = 1 - kappa * kappa
    for (let j = 0; j < k - 1; j++) next[j] = (c[j]! + kappa * c[k - 2 - j]!) / d
    c = next
  }
  return true
}

/** Coefficients of (1 - B)^d (1 - B^m)^D as 1 - sum g_j B^j; returns g. */
export function differencingPolynomial(d: number, seasonalD: number, m: number): number[] {
  let poly = [1]
  const times = (q: readonly number[]): void => {
    const out = new Array<number>(poly.length + q.length - 1).fill(0)
    for (let i = 0; i < poly.length; i++) for (let j = 0; j < q.length; j++) out[i + j]! += poly[i]! * q[j]!
    poly = out
  }
  for (let i = 0; i < d; i++) times([1, -1])
  if (seasonalD > 0) {
    const s = new Array<number>(m + 1).fill(0)
    s[0] = 1
    s[m] = -1
    for (let i = 0; i < seasonalD; i++) times(s)
  }
  return poly.slice(1).map((v) => -v)
}

/** w_t = y_t - sum g_j y_{t-j}, for t >= len(g). */
export function difference(y: readonly number[], g: readonly number[]): number[] {
  const out: number[] = []
  for (let t = g.length; t < y.length; t++) {
    let v = y[t]!
    for (let j = 1; j <= g.length; j++) v -= g[j - 1]! * y[t - j]!
    out.push(v)
  }
  return out
}

/**
 * psi weights of b(B) / a(B) for j = 0..count-1, with a(B) = 1 - sum a_j B^j and
 * b(B) = 1 + sum b_j B^j: psi_0 = 1, psi_j = b_j + sum_{i=1}^{j} a_i psi_{j-i}.
 */
export function psiWeights(a: readonly number[], b: readonly number[], count: number): number[] {
  const psi = new Array<number>(count).fill(0)
  if (count > 0) psi[0] = 1
  for (let j = 1; j < count; j++) {
    let v = j <= b.length ? b[j - 1]! : 0
    for (let i = 1; i <= Math.min(j, a.length); i++) v += a[i - 1]! * psi[j - i]!
    psi[j] = v
  }
  return psi
}
