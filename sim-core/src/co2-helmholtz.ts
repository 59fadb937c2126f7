/**
 * The reference equation of state for carbon dioxide of Span & Wagner (J. Phys. Chem. Ref. Data 25, 1509, 1996),
 * explicit in the Helmholtz energy: a/(R·T) = φ°(δ, τ) + φʳ(δ, τ), with δ = ρ/ρ_c and τ = T_c/T. SI throughout,
 * pressures absolute.
 *
 * The coefficients are those of the paper (its Tables 27 and 31) as published in the fluid data of the CoolProp
 * property library (CoolProp/CoolProp on GitHub, dev/fluids/CarbonDioxide.json, "Span-JPCRD-1996"); the
 * evaluation below is our own. The residual part has 42 terms: 7 polynomial, 27 exponential, 5 Gaussian bell
 * terms and 3 non-analytic terms that shape the critical region.
 */

/** Reducing values and gas constant of Span & Wagner: T_c 304.1282 K, ρ_c 467.6 kg/m³, R 188.9241 J/(kg·K). */
export const CO2_SPAN_WAGNER = Object.freeze({
  criticalTemperatureK: 304.1282,
  criticalDensityKgM3: 467.6,
  gasConstantJPerKgK: 188.9241,
})

const TC = CO2_SPAN_WAGNER.criticalTemperatureK
const RHOC = CO2_SPAN_WAGNER.criticalDensityKgM3
const R = CO2_SPAN_WAGNER.gasConstantJPerKgK

// Ideal-gas part (Span & Wagner eq. 2.3, Table 27): φ° = ln δ + a₁ + a₂τ + a₃ ln τ + Σ aᵢ ln(1 − exp(−θᵢτ)).
const IDEAL_A1 = 8.37304456
const IDEAL_A2 = -3.70454304
const IDEAL_A3 = 2.5
/** Planck–Einstein terms [aᵢ, θᵢ], i = 4…8. */
const PLANCK_EINSTEIN: readonly (readonly [number, number])[] = [
  [1.99427042, 3.15163],
  [0.62105248, 6.1119],
  [0.41195293, 6.77708],
  [1.04028922, 11.32384],
  [0.08327678, 27.08792],
]

/** nᵢ·δ^dᵢ·τ^tᵢ·exp(−δ^cᵢ), with c = 0 (no exponential) for the 7 polynomial terms. */
interface PowerTerm {
  n: number
  d: number
  t: number
  c: number
}

const power = (rows: readonly (readonly [number, number, number, number])[]): PowerTerm[] =>
  rows.map(([n, d, t, c]) => ({ n, d, t, c }))

// [n, d, t, c]: i = 1…7 polynomial, i = 8…34 exponential.
const POWER_TERMS: readonly PowerTerm[] = power([
  [0.388568232032, 1, 0, 0],
  [2.93854759427, 1, 0.75, 0],
  [-5.5867188535, 1, 1, 0],
  [-0.767531995925, 1, 2, 0],
  [0.317290055804, 2, 0.75, 0],
  [0.548033158978, 2, 2, 0],
  [0.122794112203, 3, 0.75, 0],
  [2.16589615432, 1, 1.5, 1],
  [1.58417351097, 2, 1.5, 1],
  [-0.231327054055, 4, 2.5, 1],
  [0.0581169164314, 5, 0, 1],
  [-0.553691372054, 5, 1.5, 1],
  [0.489466159094, 5, 2, 1],
  [-0.0242757398435, 6, 0, 1],
  [0.0624947905017, 6, 1, 1],
  [-0.121758602252, 6, 2, 1],
  [-0.370556852701, 1, 3, 2],
  [-0.0167758797004, 1, 6, 2],
  [-0.11960736638, 4, 3, 2],
  [-0.0456193625088, 4, 6, 2],
  [0.0356127892703, 4, 8, 2],
  [-0.00744277271321, 7, 6, 2],
  [-0.00173957049024, 8, 0, 2],
  [-0.0218101212895, 2, 7, 3],
  [0.0243321665592, 3, 12, 3],
  [-0.0374401334235, 3, 16, 3],
  [0.143387157569, 5, 22, 4],
  [-0.134919690833, 5, 24, 4],
  [-0.0231512250535, 6, 16, 4],
  [0.0123631254929, 7, 24, 4],
  [0.00210583219729, 8, 8, 4],
  [-0.000339585190264, 10, 2, 4],
  [0.00559936517716, 4, 28, 5],
  [-0.000303351180556, 8, 14, 6],
])

/** nᵢ·δ^dᵢ·τ^tᵢ·exp(−αᵢ(δ − εᵢ)² − βᵢ(τ − γᵢ)²), i = 35…39. */
interface GaussianTerm {
  n: number
  d: number
  t: number
  alpha: number
  beta: number
  gamma: number
  epsilon: number
}

const GAUSSIAN_TERMS: readonly GaussianTerm[] = [
  { n: -213.654886883, d: 2, t: 1, alpha: 25, beta: 325, gamma: 1.16, epsilon: 1 },
  { n: 26641.5691493, d: 2, t: 0, alpha: 25, beta: 300, gamma: 1.19, epsilon: 1 },
  { n: -24027.2122046, d: 2, t: 1, alpha: 25, beta: 300, gamma: 1.19, epsilon: 1 },
  { n: -283.41603424, d: 3, t: 3, alpha: 15, beta: 275, gamma: 1.25, epsilon: 1 },
  { n: 212.472844002, d: 3, t: 3, alpha: 20, beta: 275, gamma: 1.22, epsilon: 1 },
]

/**
 * nᵢ·Δ^bᵢ·δ·ψ, i = 40…42, with Δ = θ² + Bᵢ[(δ − 1)²]^aᵢ, θ = (1 − τ) + Aᵢ[(δ − 1)²]^(1/(2βᵢ)) and
 * ψ = exp(−Cᵢ(δ − 1)² − Dᵢ(τ − 1)²).
 */
interface NonAnalyticTerm {
  n: number
  a: number
  b: number
  beta: number
  A: number
  B: number
  C: number
  D: number
}

const NON_ANALYTIC_TERMS: readonly NonAnalyticTerm[] = [
  { n: -0.666422765408, a: 3.5, b: 0.875, beta: 0.3, A: 0.7, B: 0.3, C: 10, D: 275 },
  { n: 0.726086323499, a: 3.5, b: 0.925, beta: 0.3, A: 0.7, B: 0.3, C: 10, D: 275 },
  { n: 0.0550686686128, a: 3, b: 0.875, beta: 0.3, A: 0.7, B: 1, C: 12.5, D: 275 },
]

/** The residual part φʳ and the δ-derivatives that pressure and its slope need. */
export interface Co2Residual {
  phi: number
  /** ∂φʳ/∂δ */
  phiD: number
  /** ∂²φʳ/∂δ² */
  phiDD: number
}

/**
 * The factors of each term that depend on τ alone (n·τ^t, and the Gaussian and non-analytic τ-exponentials), kept
 * for the last τ asked. A pull asks at one bottle temperature thousands of times and a saturation solve dozens, so
 * this spares most of the powers and exponentials; it changes no result, only the time.
 */
let factorsTau = Number.NaN
const powerTau = new Float64Array(POWER_TERMS.length)
const gaussianTau = new Float64Array(GAUSSIAN_TERMS.length)
const nonAnalyticTau = new Float64Array(NON_ANALYTIC_TERMS.length)

function setTau(tau: number): void {
  if (tau === factorsTau) return
  POWER_TERMS.forEach(({ n, t }, i) => {
    powerTau[i] = t === 0 ? n : n * tau ** t
  })
  GAUSSIAN_TERMS.forEach(({ n, t, beta, gamma }, i) => {
    gaussianTau[i] = n * tau ** t * Math.exp(-beta * (tau - gamma) ** 2)
  })
  NON_ANALYTIC_TERMS.forEach(({ D }, i) => {
    nonAnalyticTau[i] = Math.exp(-D * (tau - 1) ** 2)
  })
  factorsTau = tau
}

/** δ¹…δ¹⁰ and exp(−δ¹)…exp(−δ⁶): the integer powers the terms use, by multiplication. */
const deltaPow = new Float64Array(11)
const expDeltaPow = new Float64Array(7)

/**
 * φʳ(δ, τ) and its first two δ-derivatives. The non-analytic terms are written in u = (δ − 1)² so that none of
 * them divides by δ − 1: at the critical density every power of u left has a positive exponent, and at the
 * critical point itself (Δ = 0) each term and its derivatives vanish, which is their limit there.
 */
export function co2Residual(delta: number, tau: number): Co2Residual {
  setTau(tau)
  deltaPow[0] = 1
  for (let k = 1; k < deltaPow.length; k++) deltaPow[k] = deltaPow[k - 1]! * delta
  for (let k = 1; k < expDeltaPow.length; k++) expDeltaPow[k] = Math.exp(-deltaPow[k]!)
  const delta2 = delta * delta
  let phi = 0
  let phiD = 0
  let phiDD = 0
  for (let i = 0; i < POWER_TERMS.length; i++) {
    const { d, c } = POWER_TERMS[i]!
    // n·δ^d·τ^t·exp(−δ^c): ∂/∂δ brings (d − c·δ^c)/δ; the polynomial terms have c = 0 and no exponential.
    const cDc = c === 0 ? 0 : c * deltaPow[c]!
    const term = powerTau[i]! * deltaPow[d]! * (c === 0 ? 1 : expDeltaPow[c]!)
    const k = d - cDc
    phi += term
    phiD += (term * k) / delta
    phiDD += (term * (k * (k - 1) - c * cDc)) / delta2
  }
  // Neighbouring terms share parameters (α, ε; β, a, C): each exponential or power is taken once per value.
  let gaussAlpha = Number.NaN
  let gaussEpsilon = Number.NaN
  let gaussExp = 0
  for (let i = 0; i < GAUSSIAN_TERMS.length; i++) {
    const { d, alpha, epsilon } = GAUSSIAN_TERMS[i]!
    const dd = delta - epsilon
    if (alpha !== gaussAlpha || epsilon !== gaussEpsilon) {
      gaussAlpha = alpha
      gaussEpsilon = epsilon
      gaussExp = Math.exp(-alpha * dd * dd)
    }
    const term = gaussianTau[i]! * deltaPow[d]! * gaussExp
    const k = d / delta - 2 * alpha * dd
    phi += term
    phiD += term * k
    phiDD += term * (k * k - d / delta2 - 2 * alpha)
  }
  const s = delta - 1
  const u = s * s
  const oneMinusTau = 1 - tau
  let betaKey = Number.NaN
  let uHalfBeta = 0
  let aKey = Number.NaN
  let uA = 0
  let cKey = Number.NaN
  let expCu = 0
  for (let i = 0; i < NON_ANALYTIC_TERMS.length; i++) {
    const { n, a, b, beta, A, B, C } = NON_ANALYTIC_TERMS[i]!
    if (beta !== betaKey) {
      betaKey = beta
      uHalfBeta = u === 0 ? 0 : Math.pow(u, 1 / (2 * beta))
    }
    if (a !== aKey) {
      aKey = a
      uA = u === 0 ? 0 : Math.pow(u, a)
    }
    if (C !== cKey) {
      cKey = C
      expCu = Math.exp(-C * u)
    }
    const theta = oneMinusTau + A * uHalfBeta
    const Delta = theta * theta + B * uA
    if (Delta === 0) continue
    // dΔ/dδ = s·g(u); d²Δ/dδ² = g(u) + 2u·g′(u). Exponents of u: 1/(2β) − 1 > 0, 1/β − 1 > 0, a − 1 > 0.
    const uHalfBetaM1 = u === 0 ? 0 : uHalfBeta / u
    const uAM1 = u === 0 ? 0 : uA / u
    const g = ((2 * A * theta) / beta) * uHalfBetaM1 + 2 * B * a * uAM1
    const twoUgPrime =
      ((2 * A) / beta) * ((A / beta) * uHalfBeta * uHalfBetaM1 + 2 * theta * (1 / (2 * beta) - 1) * uHalfBetaM1) +
      4 * B * a * (a - 1) * uAM1
    const dDelta = s * g
    const d2Delta = g + twoUgPrime
    const Db = Math.pow(Delta, b)
    const DbD = (b * Db * dDelta) / Delta
    const DbDD = b * ((Db / Delta) * d2Delta + ((b - 1) * Db * dDelta * dDelta) / (Delta * Delta))
    const psi = expCu * nonAnalyticTau[i]!
    const psiD = -2 * C * s * psi
    const psiDD = (4 * C * C * u - 2 * C) * psi
    phi += n * Db * delta * psi
    phiD += n * (Db * (psi + delta * psiD) + DbD * delta * psi)
    phiDD += n * (Db * (2 * psiD + delta * psiDD) + 2 * DbD * (psi + delta * psiD) + DbDD * delta * psi)
  }
  return { phi, phiD, phiDD }
}

/** The ideal-gas part φ° and its τ-derivatives. */
export interface Co2Ideal {
  phi: number
  /** ∂φ°/∂τ */
  phiT: number
  /** ∂²φ°/∂τ² */
  phiTT: number
}

/** φ°(δ, τ) of Span & Wagner eq. 2.3, with its reference state (a₁, a₂) as in the paper. */
export function co2Ideal(delta: number, tau: number): Co2Ideal {
  let phi = Math.log(delta) + IDEAL_A1 + IDEAL_A2 * tau + IDEAL_A3 * Math.log(tau)
  let phiT = IDEAL_A2 + IDEAL_A3 / tau
  let phiTT = -IDEAL_A3 / (tau * tau)
  for (const [a, theta] of PLANCK_EINSTEIN) {
    const e = Math.exp(-theta * tau)
    phi += a * Math.log(1 - e)
    phiT += (a * theta * e) / (1 - e)
    phiTT -= (a * theta * theta * e) / ((1 - e) * (1 - e))
  }
  return { phi, phiT, phiTT }
}

function requireState(densityKgM3: number, temperatureK: number): void {
  if (!Number.isFinite(densityKgM3) || densityKgM3 <= 0) {
    throw new RangeError(`densityKgM3 must be a positive number, got ${densityKgM3}`)
  }
  if (!Number.isFinite(temperatureK) || temperatureK <= 0) {
    throw new RangeError(`temperatureK must be a positive number, got ${temperatureK}`)
  }
}

/**
 * Pressure, Pa absolute, of CO₂ at a density and temperature: p = ρ·R·T·(1 + δ·∂φʳ/∂δ). Below the critical
 * temperature and between the saturated densities this is the equation's own (metastable or unstable) surface,
 * not the pressure of a liquid–vapour mixture; co2BottleState makes that distinction.
 */
export function co2EosPressurePa(densityKgM3: number, temperatureK: number): number {
  requireState(densityKgM3, temperatureK)
  const delta = densityKgM3 / RHOC
  return densityKgM3 * R * temperatureK * (1 + delta * co2Residual(delta, TC / temperatureK).phiD)
}

/** (∂p/∂ρ)_T, Pa per kg/m³: R·T·(1 + 2δ·φʳ_δ + δ²·φʳ_δδ). Positive wherever the state is mechanically stable. */
export function co2EosPressureSlopePaPerKgM3(densityKgM3: number, temperatureK: number): number {
  requireState(densityKgM3, temperatureK)
  const delta = densityKgM3 / RHOC
  const { phiD, phiDD } = co2Residual(delta, TC / temperatureK)
  return R * temperatureK * (1 + 2 * delta * phiD + delta * delta * phiDD)
}

/** Specific Gibbs energy, J/kg, on the paper's reference state: g = R·T·(1 + φ° + φʳ + δ·φʳ_δ). */
export function co2EosGibbsEnergyJPerKg(densityKgM3: number, temperatureK: number): number {
  requireState(densityKgM3, temperatureK)
  const delta = densityKgM3 / RHOC
  const tau = TC / temperatureK
  const r = co2Residual(delta, tau)
  return R * temperatureK * (1 + co2Ideal(delta, tau).phi + r.phi + delta * r.phiD)
}

/** Isobaric heat capacity of the ideal gas, J/(kg·K): c_p° = R·(1 − τ²·∂²φ°/∂τ²). */
export function co2IdealGasHeatCapacityJPerKgK(temperatureK: number): number {
  requireState(1, temperatureK)
  const tau = TC / temperatureK
  return R * (1 - tau * tau * co2Ideal(1, tau).phiTT)
}
