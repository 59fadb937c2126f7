import { bracketedRoot } from './bracketed-root.ts'
import { orificeFlowKgS, type FlowFunction } from './orifice.ts'

/**
 * The steady pressure of a chamber joined to several sources through orifices (MODEL.md §4b: one compressible
 * divider for both levels): the pressure at which the compressible flows through its open paths sum to zero.
 * The pull takes chambers with large ports as quasi-static through this function, and the static balance finds a
 * solenoid's chamber pressure with it, so the live number and a settled pull agree.
 *
 * With one open path the chamber sits at that path's source; with none, at `restPa`. Pressures absolute, Pa.
 */
export function steadyChamberPressurePa(
  /** C_d·A of each path as open now (a switching valve's share already applied), m². */
  areasM2: ArrayLike<number>,
  /** Source pressure at the far end of each path, Pa absolute. */
  sourcesPa: ArrayLike<number>,
  count: number,
  sqrtRT: number,
  flow: FlowFunction,
  restPa: number,
  /**
   * (dV/dt)/(R·T) of a chamber whose piston moves, kg/(s·Pa): the gas the moving piston displaces, p·(dV/dt)/(R·T),
   * must pass the paths too. This keeps the air cushion of a quasi-static chamber (a fast valve pumps its chamber
   * through the ports, which damps it); zero for a chamber at rest.
   */
  displacementPerPa = 0,
): number {
  let lo = Infinity
  let hi = -Infinity
  let active = 0
  let only = restPa
  for (let i = 0; i < count; i++) {
    if (!(areasM2[i]! > 0)) continue
    const p = sourcesPa[i]!
    active++
    only = p
    if (p < lo) lo = p
    if (p > hi) hi = p
  }
  if (active === 0) return restPa
  if (displacementPerPa === 0 && (active === 1 || hi - lo <= 1e-12 * hi)) return only
  if (active === 1) {
    // One path and a moving piston: the small-drop limit of the orifice, ṁ = C_d·A·p/√(RT)·√(2·Δp/p), gives the
    // cushion in closed form; k = (dV/dt)/(RT)·√(RT)/(C_d·A) is the piston's speed over the port's. The drop is
    // Δp/p = k²/2, below a source (gas drawn in) or above it (pushed out), to within (Δp/p)² of the orifice's own
    // compressible law while under 1 %; a faster piston takes the root search below.
    let area = 0
    for (let i = 0; i < count; i++) if (areasM2[i]! > 0) area = areasM2[i]!
    const k = (displacementPerPa * sqrtRT) / area
    const half = 0.5 * k * k
    if (half < 0.01) {
      if (k > 0) {
        // Inflow p·(dV/dt)/(RT) at the chamber's own pressure: δ = k²(1 − δ)²/2, one fixed-point step from k²/2.
        const d = 1 - half
        return only * (1 - half * d * d)
      }
      return only / (1 - half)
    }
  }
  const net = (p: number) => {
    let sum = -p * displacementPerPa
    for (let i = 0; i < count; i++) {
      const a = areasM2[i]!
      if (a > 0) sum += orificeFlowKgS(a, sourcesPa[i]!, p, sqrtRT, flow)
    }
    return sum
  }
  // The root lies below the lowest source while the chamber grows (gas is drawn in) and above the highest while it
  // shrinks (gas is pushed out). Past a few times the sources the ports cannot pass the displaced gas even choked:
  // the pressure is held there, a cushion that stops the piston within a fraction of a millimetre.
  if (displacementPerPa > 0) lo = Math.min(lo, only) * 1e-3
  else if (displacementPerPa < 0) {
    hi *= 3
    if (net(hi) > 0) return hi
  }
  // The net inflow is positive at lo and negative at hi.
  const fLo = net(lo)
  const fHi = net(hi)
  if (fLo <= 0) return lo
  if (fHi >= 0) return hi
  return bracketedRoot(net, lo, hi, fLo, fHi, 1e-13, 100)
}
