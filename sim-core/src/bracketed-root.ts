/**
 * The root of f on a bracket [lo, hi] where f changes sign, by the Illinois method (regula falsi that halves the
 * stale end's value when the same end moves twice): superlinear like the secant, and never leaves the bracket. Used
 * in the pull's right-hand side (the chambers' steady divider, the drive pressure that passes the exhaust, the
 * turbine outlet), so it allocates nothing. Stops when f is exactly zero, when the bracket is narrower than
 * `relTol` of |hi|, or after `maxIter` steps, and returns its last estimate.
 */
export function bracketedRoot(f: (x: number) => number, lo: number, hi: number, fLo: number, fHi: number, relTol: number, maxIter: number): number {
  let side = 0
  let x = fLo === 0 ? lo : hi
  if (fLo === 0 || fHi === 0) return x
  const loPositive = fLo > 0
  for (let i = 0; i < maxIter; i++) {
    x = fHi === fLo ? 0.5 * (lo + hi) : (lo * fHi - hi * fLo) / (fHi - fLo)
    const fx = f(x)
    if (fx === 0 || Math.abs(hi - lo) <= relTol * Math.abs(hi)) return x
    if ((fx > 0) === loPositive) {
      lo = x
      fLo = fx
      if (side === 1) fHi *= 0.5
      side = 1
    } else {
      hi = x
      fHi = fx
      if (side === -1) fLo *= 0.5
      side = -1
    }
  }
  return x
}
