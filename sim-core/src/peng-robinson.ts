/**
 * The Peng–Robinson equation of state (Peng & Robinson, Ind. Eng. Chem. Fundam. 15, 59, 1976), for one pure
 * fluid, in mass units (kg/m³, Pa, K):
 *
 *   p = R·T/(v − b) − a·α(T)/(v² + 2·b·v − b²),   v molar volume,
 *   a = Ω_a·R²·T_c²/p_c,  b = Ω_b·R·T_c/p_c,  α = (1 + κ·(1 − √(T/T_c)))²,  κ = 0.37464 + 1.54226·ω − 0.26992·ω².
 */

/** Universal gas constant, J/(mol·K) (exact since the 2019 SI redefinition). */
export const MOLAR_GAS_CONSTANT = 8.314462618

export interface CubicFluid {
  criticalTemperatureK: number
  criticalPressurePa: number
  acentricFactor: number
  molarMassKgPerMol: number
}

/**
 * Ω_b, Ω_a and the critical compressibility Z_c of Peng–Robinson, from the conditions that the cubic in Z has a
 * triple root at the critical point: 1 − B = 3·Z_c, A − 3B² − 2B = 3·Z_c², A·B − B² − B³ = Z_c³. Solving them here,
 * instead of copying the rounded 0.45724 and 0.07780, makes the equation pass through (T_c, p_c) exactly.
 */
function criticalConstants(): { omegaA: number; omegaB: number; zc: number } {
  // With Z_c = (1 − B)/3 the three conditions reduce to g(B) = 0; g changes sign once on (0, 0.2).
  const g = (b: number) => {
    const zc = (1 - b) / 3
    const a = 3 * zc * zc + 3 * b * b + 2 * b
    return a * b - b * b - b ** 3 - zc ** 3
  }
  let lo = 0
  let hi = 0.2
  for (let i = 0; i < 200; i++) {
    const mid = (lo + hi) / 2
    if (g(lo) * g(mid) <= 0) hi = mid
    else lo = mid
  }
  const omegaB = (lo + hi) / 2
  const zc = (1 - omegaB) / 3
  return { omegaA: 3 * zc * zc + 3 * omegaB * omegaB + 2 * omegaB, omegaB, zc }
}

export const PENG_ROBINSON = Object.freeze(criticalConstants())

interface Coefficients {
  /** J·m³/mol² at T, including α(T). */
  aAlpha: number
  /** m³/mol. */
  b: number
  molarMass: number
}

function coefficients(fluid: CubicFluid, temperatureK: number): Coefficients {
  const { criticalTemperatureK: tc, criticalPressurePa: pc, acentricFactor: w } = fluid
  const kappa = 0.37464 + 1.54226 * w - 0.26992 * w * w
  const alpha = (1 + kappa * (1 - Math.sqrt(temperatureK / tc))) ** 2
  const R = MOLAR_GAS_CONSTANT
  return {
    aAlpha: ((PENG_ROBINSON.omegaA * R * R * tc * tc) / pc) * alpha,
    b: (PENG_ROBINSON.omegaB * R * tc) / pc,
    molarMass: fluid.molarMassKgPerMol,
  }
}

function requirePositive(name: string, value: number): void {
  if (!Number.isFinite(value) || value <= 0) throw new RangeError(`${name} must be a positive number, got ${value}`)
}

/** Pressure (absolute, Pa) of the fluid at a density and temperature. */
export function pengRobinsonPressurePa(fluid: CubicFluid, densityKgM3: number, temperatureK: number): number {
  requirePositive('density', densityKgM3)
  requirePositive('temperature', temperatureK)
  const { aAlpha, b, molarMass } = coefficients(fluid, temperatureK)
  const v = molarMass / densityKgM3
  if (v <= b) {
    throw new RangeError(`density ${densityKgM3} kg/m³ is beyond the Peng–Robinson co-volume limit ${molarMass / b} kg/m³`)
  }
  return (MOLAR_GAS_CONSTANT * temperatureK) / (v - b) - aAlpha / (v * v + 2 * b * v - b * b)
}

/** Real roots of z³ + c2·z² + c1·z + c0, ascending. */
function cubicRoots(c2: number, c1: number, c0: number): number[] {
  const q = (3 * c1 - c2 * c2) / 9
  const r = (9 * c2 * c1 - 27 * c0 - 2 * c2 ** 3) / 54
  const disc = q ** 3 + r * r
  const shift = -c2 / 3
  if (disc > 0) {
    const s = Math.cbrt(r + Math.sqrt(disc))
    const t = Math.cbrt(r - Math.sqrt(disc))
    return [shift + s + t]
  }
  const rho = Math.sqrt(-(q ** 3))
  const theta = Math.acos(rho === 0 ? 1 : Math.min(1, Math.max(-1, r / rho)))
  const m = 2 * Math.cbrt(rho)
  return [0, 1, 2].map((k) => shift + m * Math.cos((theta + 2 * Math.PI * k) / 3)).sort((x, y) => x - y)
}

/**
 * Density (kg/m³) of the gas-like root at a pressure and temperature: the largest compressibility root of the
 * cubic, polished by Newton steps on the cubic itself. Below T_c and above the saturation pressure the fluid
 * is liquid and this root is not the stable one; callers that care check the saturation pressure first.
 */
export function pengRobinsonGasDensityKgM3(fluid: CubicFluid, pressurePa: number, temperatureK: number): number {
  requirePositive('pressure', pressurePa)
  requirePositive('temperature', temperatureK)
  const { aAlpha, b, molarMass } = coefficients(fluid, temperatureK)
  const RT = MOLAR_GAS_CONSTANT * temperatureK
  const A = (aAlpha * pressurePa) / (RT * RT)
  const B = (b * pressurePa) / RT
  const c2 = -(1 - B)
  const c1 = A - 3 * B * B - 2 * B
  const c0 = -(A * B - B * B - B ** 3)
  const roots = cubicRoots(c2, c1, c0).filter((z) => z > B)
  let z = roots[roots.length - 1]
  if (z === undefined) throw new RangeError(`no gas root of Peng–Robinson at ${pressurePa} Pa and ${temperatureK} K`)
  for (let i = 0; i < 3; i++) {
    const f = ((z + c2) * z + c1) * z + c0
    const df = (3 * z + 2 * c2) * z + c1
    if (df === 0) break
    z -= f / df
  }
  return (pressurePa * molarMass) / (z * RT)
}
