import { CO2_SPAN_WAGNER, co2Residual } from './co2-helmholtz.ts'

/**
 * Liquid–vapour saturation of CO₂ solved from the Span & Wagner equation of state itself (not from its ancillary
 * equations), so that a bottle's pressure is the same whichever side of a saturated density it is computed from.
 */

/** The triple point, 216.592 K (Span & Wagner 1996). */
const TRIPLE_POINT_K = 216.592

const TC = CO2_SPAN_WAGNER.criticalTemperatureK
const RHOC = CO2_SPAN_WAGNER.criticalDensityKgM3
const R = CO2_SPAN_WAGNER.gasConstantJPerKgK

// Starting values: the ancillary equations of Span & Wagner (eqs. 3.14 and 3.15), within a few tenths of a per
// cent of the equation's own saturated densities, close enough for Newton's method to converge in a few steps.
const LIQUID_DENSITY = [
  [1.9245108, 0.34],
  [-0.62385555, 0.5],
  [-0.32731127, 10 / 6],
  [0.39245142, 11 / 6],
] as const
const VAPOUR_DENSITY = [
  [-1.7074879, 0.34],
  [-0.8227467, 0.5],
  [-4.6008549, 1],
  [-10.111178, 7 / 3],
  [-29.742252, 14 / 3],
] as const
const series = (terms: readonly (readonly [number, number])[], x: number): number =>
  terms.reduce((sum, [a, t]) => sum + a * x ** t, 0)

export interface Co2Saturation {
  temperatureK: number
  /** Absolute. */
  pressurePa: number
  /** ρ′, kg/m³. */
  liquidDensityKgM3: number
  /** ρ″, kg/m³. */
  vapourDensityKgM3: number
}

/** p/(ρ_c·R·T) = δ·(1 + δ·φʳ_δ), its δ-derivative, and g/(R·T) less its δ-free part, δ·φʳ_δ + φʳ + ln δ. */
function reduced(delta: number, tau: number): { j: number; jD: number; k: number } {
  const { phi, phiD, phiDD } = co2Residual(delta, tau)
  return {
    j: delta * (1 + delta * phiD),
    jD: 1 + 2 * delta * phiD + delta * delta * phiDD,
    k: delta * phiD + phi + Math.log(delta),
  }
}

/**
 * Newton's method on equal pressure and equal Gibbs energy of the two phases, in the reduced densities
 * (δ′, δ″): J(δ″) = J(δ′) and K(δ″) = K(δ′), where ∂K/∂δ = (∂J/∂δ)/δ. Null when it does not converge to two
 * distinct phases: the trivial root δ′ = δ″ also solves both equations, so the gap must stay near the
 * ancillary equations' gap.
 */
function solve(tau: number, liquid0: number, vapour0: number): { liquid: number; vapour: number } | null {
  let dl = liquid0
  let dv = vapour0
  const gap0 = liquid0 - vapour0
  const distinct = () => dl - dv > 0.25 * gap0 && dl - dv < 4 * gap0
  for (let i = 0; i < 60; i++) {
    const l = reduced(dl, tau)
    const v = reduced(dv, tau)
    const f1 = v.j - l.j
    const f2 = v.k - l.k
    // Near the critical point the densities are poorly conditioned (the isotherm is nearly flat) while the
    // residuals still reach rounding: stop there, where the pressure is as good as double precision allows.
    if (Math.abs(f1) <= 1e-13 * l.j && Math.abs(f2) <= 1e-13) return distinct() ? { liquid: dl, vapour: dv } : null
    const a = -l.jD
    const b = v.jD
    const c = -l.jD / dl
    const d = v.jD / dv
    const det = a * d - b * c
    if (!Number.isFinite(det) || det === 0) return null
    let stepL = (-f1 * d + f2 * b) / det
    let stepV = (-f2 * a + f1 * c) / det
    // Halve a step that would cross the phases over or take a density below zero.
    for (let h = 0; h < 40 && !(dl + stepL > dv + stepV && dv + stepV > 0); h++) {
      stepL /= 2
      stepV /= 2
    }
    dl += stepL
    dv += stepV
    // Convergence is quadratic: once a step is this small, the residuals after it are rounding.
    if (Math.abs(stepL) <= 1e-11 * dl && Math.abs(stepV) <= 1e-11 * dv) return distinct() ? { liquid: dl, vapour: dv } : null
  }
  return null
}

/**
 * Saturation pressure and saturated densities at a temperature from the equation of state: the two densities at
 * which the liquid and the vapour have the same pressure and the same Gibbs energy (Maxwell's criterion).
 * Agrees with the ancillary equations (co2SaturationPressurePa etc.) within 0.005 % in pressure, and with the
 * paper's saturation table (its Table 34) to the printed figures. At the critical temperature both densities are
 * ρ_c and the pressure is the equation's at (ρ_c, T_c).
 *
 * Throws a RangeError outside the triple point to the critical point, naming the temperature.
 */
export function co2EosSaturation(temperatureK: number): Co2Saturation {
  if (!(temperatureK >= TRIPLE_POINT_K && temperatureK <= TC)) {
    throw new RangeError(
      `CO₂ has no liquid–vapour saturation at ${temperatureK} K: it exists from the triple point ${TRIPLE_POINT_K} K ` +
        `to the critical point ${TC} K`,
    )
  }
  const belowCriticalK = TC - temperatureK
  if (belowCriticalK < NEAR_CRITICAL_BAND_K) return nearCritical(temperatureK, belowCriticalK)
  const solved = solveAt(temperatureK)
  if (solved === null) throw new RangeError(`the CO₂ saturation at ${temperatureK} K did not converge`)
  return solved
}

function solveAt(temperatureK: number): Co2Saturation | null {
  const tau = TC / temperatureK
  const theta = 1 - temperatureK / TC
  const found = solve(tau, Math.exp(series(LIQUID_DENSITY, theta)), Math.exp(series(VAPOUR_DENSITY, theta)))
  if (found === null) return null
  return {
    temperatureK,
    pressurePa: reduced(found.vapour, tau).j * RHOC * R * temperatureK,
    liquidDensityKgM3: found.liquid * RHOC,
    vapourDensityKgM3: found.vapour * RHOC,
  }
}

/**
 * Within this much of T_c, Newton's method works at the rounding of double precision (the loop of the isotherm is
 * less than a millionth of the pressure deep), and a few tenths of a microkelvin from T_c it no longer settles.
 */
const NEAR_CRITICAL_BAND_K = 1e-5
let bandEdge: Co2Saturation | null = null

/**
 * Saturation within NEAR_CRITICAL_BAND_K of T_c, between the solution at the band's edge and the critical point:
 * the pressure linear in temperature (it changes by under 2 Pa across the band), each density from ρ_c with the
 * leading power (T_c − T)^0.34 of the ancillary equations. Meets the solved state at the edge and the critical
 * point at T_c.
 */
function nearCritical(temperatureK: number, belowCriticalK: number): Co2Saturation {
  bandEdge ??= solveAt(TC - NEAR_CRITICAL_BAND_K)
  if (bandEdge === null) throw new RangeError(`the CO₂ saturation at ${TC - NEAR_CRITICAL_BAND_K} K did not converge`)
  const pc = reduced(1, 1).j * RHOC * R * TC
  const x = belowCriticalK / NEAR_CRITICAL_BAND_K
  const shape = x ** 0.34
  return {
    temperatureK,
    pressurePa: pc + (bandEdge.pressurePa - pc) * x,
    liquidDensityKgM3: RHOC + (bandEdge.liquidDensityKgM3 - RHOC) * shape,
    vapourDensityKgM3: RHOC + (bandEdge.vapourDensityKgM3 - RHOC) * shape,
  }
}
