import { circleArea, springTotals, wastegateAreas, type WastegateAreas } from './geometry.ts'
import { AIR } from './gas.ts'
import { co2BottleState, type Co2BottleState } from './co2.ts'
import type { Scenario } from './scenario.ts'

/**
 * The static level (MODEL.md §2–3): each chamber's gauge pressure is affine in boost b,
 * p_top = α_t·b + β_t and p_bot = α_b·b + β_b, drive pressure p_em = r·b + p_em0, and the valve
 * cracks where F_net(0) crosses zero. Positive forces open the valve.
 */

export interface ChamberCoefficients {
  alphaTop: number
  betaTopPa: number
  alphaBottom: number
  betaBottomPa: number
}

export type BoostOutcome =
  | { status: 'opens'; boostPa: number }
  /** Boost can never open the valve: the closing areas outweigh the opening ones. */
  | { status: 'never-opens'; reason: string }
  /** The valve is already off its seat at zero boost; `boostPa` is the (≤ 0) boost of the balance. */
  | { status: 'open-at-zero-boost'; boostPa: number }

export type ForceKey = 'drive' | 'bottom' | 'spring' | 'top' | 'downstream'

export interface ForceTerm {
  key: ForceKey
  /** Signed: positive opens, negative closes. */
  forceN: number
  /** Gauge pressure acting (0 for the spring). */
  pressurePa: number
  /** Net area the pressure acts on (0 for the spring). */
  areaM2: number
}

export interface RatioPoint {
  ratio: number
  crack: BoostOutcome
  fullOpen: BoostOutcome
}

/** What a regulated supply (CO₂ bottle, compressor and tank) gives the top port in the static balance. */
export interface SupplyAtBalance {
  kind: 'co2' | 'compressor'
  /**
   * Gauge pressure at the regulator inlet: the bottle, or the tank at its cut-in pressure (its lowest normal one);
   * null when the bottle's fill is impossible (see `warning`).
   */
  sourcePa: number | null
  /** Gauge pressure delivered to the top port: min(setpoint, source − droop), never below zero. */
  deliveredPa: number
  /** The source cannot hold the setpoint. */
  belowSetpoint: boolean
  /** The bottle's state (CO₂ only). */
  bottle?: Co2BottleState
  /** A safety note for the user (a hot or overfilled bottle). */
  warning?: string
}

export interface BalanceResult {
  areas: WastegateAreas
  seatForceN: number
  rateNPerM: number
  maxLiftM: number
  chambers: ChamberCoefficients
  ratio: number
  driveAtZeroBoostPa: number
  crack: BoostOutcome
  fullOpen: BoostOutcome
  /** Each force at the crack point (sums to zero); null when the valve never opens or is open at zero boost. */
  forcesAtCrack: ForceTerm[] | null
  /** Crack and full-open boost for drive-to-boost ratios 1.0 to 2.0 (the range the trade estimates). */
  ratioSweep: RatioPoint[]
  /** Crack boost above the user's boost limit. */
  overLimit: boolean
  /** The regulated supply, or null when boost itself is the source. */
  supply: SupplyAtBalance | null
}

/**
 * Quasi-static pressure fraction of a chamber between a feed orifice and a vent orifice, both subsonic and
 * small against the chamber: equal mass flows through the two areas give p_ch/p_src ≈ A_f²/(A_f² + A_v²)
 * (incompressible divider; within a few per cent of the compressible balance below about 1 bar).
 */
export function dividerFraction(feedAreaM2: number, ventAreaM2: number): number {
  const f2 = feedAreaM2 * feedAreaM2
  const v2 = ventAreaM2 * ventAreaM2
  return f2 + v2 === 0 ? 0 : f2 / (f2 + v2)
}

const regulate = (setpointPa: number, sourcePa: number, droopPa: number) => {
  const deliveredPa = Math.max(0, Math.min(setpointPa, sourcePa - droopPa))
  return { deliveredPa, belowSetpoint: deliveredPa < setpointPa }
}

/**
 * The regulated supply of MODEL.md §4: a regulator delivers min(setpoint, p_source − droop). A CO₂ bottle's
 * pressure comes from its fill and temperature (gauge = absolute − ambient); a compressor's tank is taken at its
 * cut-in pressure, the lowest it normally runs at, so the static answer holds for the whole compressor cycle.
 */
export function regulatedSupply(s: Scenario): SupplyAtBalance | null {
  const supply = s.supply
  if (supply.kind === 'boost') return null
  if (supply.kind === 'compressor') {
    return { kind: 'compressor', sourcePa: supply.cutInPa, ...regulate(supply.regulatorSetpointPa, supply.cutInPa, supply.regulatorDroopPa) }
  }
  let bottle: Co2BottleState
  try {
    bottle = co2BottleState({
      volumeM3: supply.bottleVolumeM3,
      massKg: supply.fillMassKg,
      temperatureK: supply.bottleTemperatureK,
    })
  } catch (error) {
    // An impossible fill: the balance stays usable at the setpoint, and the reason is shown beside it.
    if (!(error instanceof RangeError)) throw error
    return {
      kind: 'co2',
      sourcePa: null,
      deliveredPa: supply.regulatorSetpointPa,
      belowSetpoint: false,
      warning: error.message,
    }
  }
  const sourcePa = bottle.pressurePa - s.ambient.pressurePa
  return {
    kind: 'co2',
    sourcePa,
    ...regulate(supply.regulatorSetpointPa, sourcePa, supply.regulatorDroopPa),
    bottle,
    ...(bottle.warning === undefined ? {} : { warning: bottle.warning }),
  }
}

/** The gauge pressure the supply offers the top port: boost itself (α = 1) or the regulated pressure (β). */
function supplySource(s: Scenario): { alpha: number; betaPa: number } {
  const regulated = regulatedSupply(s)
  return regulated === null ? { alpha: 1, betaPa: 0 } : { alpha: 0, betaPa: regulated.deliveredPa }
}

/** Maps a port arrangement to its (α, β) pairs (MODEL.md §3). */
export function chamberCoefficients(s: Scenario): ChamberCoefficients {
  const c = s.control
  const src = supplySource(s)
  const none: ChamberCoefficients = { alphaTop: 0, betaTopPa: 0, alphaBottom: 0, betaBottomPa: 0 }
  switch (c.kind) {
    case 'none':
      return none
    case 'bottom-boost':
      return { ...none, alphaBottom: 1 }
    case 'top-supply':
      return { ...none, alphaTop: src.alpha, betaTopPa: src.betaPa }
    case 'both':
      return { alphaTop: src.alpha, betaTopPa: src.betaPa, alphaBottom: 1, betaBottomPa: 0 }
    case 'bleed-top':
      return { ...none, alphaTop: c.fraction, alphaBottom: c.bottomOnBoost ? 1 : 0 }
    case 'solenoid-3port': {
      const sol = c.duty * circleArea(c.solenoidDiameterM)
      const restrictor = circleArea(c.restrictorDiameterM)
      if (c.chamber === 'bottom') {
        // Boost feeds the bottom chamber through the restrictor; the solenoid vents it as duty rises.
        return { ...none, alphaBottom: dividerFraction(restrictor, sol) }
      }
      // The solenoid feeds the top chamber from the supply; the restrictor bleeds it to the air.
      const k = dividerFraction(sol, restrictor)
      return { ...none, alphaTop: src.alpha * k, betaTopPa: src.betaPa * k }
    }
    case 'solenoid-4port':
    case 'closed-loop': {
      // Closed loop: the static level is the arrangement at the controller's floor duty, where it starts a pull.
      const duty = c.kind === 'closed-loop' ? c.dutyMin : c.duty
      const sol = duty * circleArea(c.solenoidDiameterM)
      const restrictor = circleArea(c.restrictorDiameterM)
      const top = dividerFraction(sol, restrictor)
      return {
        alphaTop: src.alpha * top,
        betaTopPa: src.betaPa * top,
        alphaBottom: c.kind === 'solenoid-4port' ? dividerFraction(restrictor, sol) : 0,
        betaBottomPa: 0,
      }
    }
  }
}

/** Exhaust mass flow at the end of the pull at boost b (four-stroke: ṁ = η_v·ρ_im·V_d·N/120 · (1 + 1/AFR)). */
export function exhaustMassFlowKgS(s: Scenario, boostPa: number): number {
  const rho = (s.ambient.pressurePa + Math.max(boostPa, 0)) / (AIR.gasConstant * s.engine.chargeTemperatureK)
  return s.engine.volumetricEfficiency * rho * s.engine.displacementM3 * (s.engine.rpmEnd / 120) * (1 + 1 / s.engine.airFuelRatio)
}

/**
 * Gauge pressure downstream of the valve at boost b. Vented: zero. Recirculated: the turbine outlet,
 * K_ex·ṁ². Restricted: zero at crack (no gate flow), K·ṁ² at full open. The static level takes the whole
 * exhaust flow at the pull's end rpm, an upper bound that errs towards more boost.
 */
function downstreamPa(s: Scenario, boostPa: number, atFullOpen: boolean): number {
  const d = s.exhaust.downstream
  if (d.kind === 'vented') return 0
  const m = exhaustMassFlowKgS(s, boostPa)
  if (d.kind === 'recirculated') return s.exhaust.backPressureCoefficientPaPerKg2S2 * m * m
  return atFullOpen ? d.coefficientPaPerKg2S2 * m * m : 0
}

interface BalanceInputs {
  areas: WastegateAreas
  chambers: ChamberCoefficients
  ratio: number
  driveAtZeroBoostPa: number
}

/** F_net(x) at boost b (MODEL.md §2), with the spring at `springForceN`. */
function netForce(inp: BalanceInputs, springForceN: number, boostPa: number, downstreamGaugePa: number): number {
  const { areas: a, chambers: c } = inp
  const drive = inp.ratio * Math.max(boostPa, 0) + inp.driveAtZeroBoostPa
  return (
    drive * a.valveM2 +
    (c.alphaBottom * boostPa + c.betaBottomPa) * a.bottomM2 -
    springForceN -
    (c.alphaTop * boostPa + c.betaTopPa) * a.topM2 -
    downstreamGaugePa * a.valveBackM2
  )
}

const NEVER_REASON =
  'boost can never open the valve: the top chamber outweighs drive pressure and the bottom chamber at any boost'
/** The highest boost the static solver searches (about 290 psi); beyond it the valve counts as never opening. */
const SEARCH_LIMIT_PA = 2_000_000

/** The boost at which F_net = 0 with the spring at `springForceN`. */
function solveBoost(s: Scenario, inp: BalanceInputs, springForceN: number, atFullOpen: boolean): BoostOutcome {
  const { areas: a, chambers: c } = inp
  const slope = inp.ratio * a.valveM2 + c.alphaBottom * a.bottomM2 - c.alphaTop * a.topM2
  if (s.exhaust.downstream.kind === 'vented' || (s.exhaust.downstream.kind === 'restricted' && !atFullOpen)) {
    // Closed form of MODEL.md §3 (p_dn = 0).
    const numerator =
      springForceN + c.betaTopPa * a.topM2 - c.betaBottomPa * a.bottomM2 - inp.driveAtZeroBoostPa * a.valveM2
    if (numerator <= 0) {
      return { status: 'open-at-zero-boost', boostPa: slope > 0 ? numerator / slope : 0 }
    }
    if (slope <= 0) return { status: 'never-opens', reason: NEVER_REASON }
    return { status: 'opens', boostPa: numerator / slope }
  }
  // p_dn rises with boost: find the first crossing by a coarse scan, then bisect.
  const h = (b: number) => netForce(inp, springForceN, b, downstreamPa(s, b, atFullOpen))
  if (h(0) >= 0) return { status: 'open-at-zero-boost', boostPa: 0 }
  const step = 5_000
  let lo = 0
  for (let hi = step; hi <= SEARCH_LIMIT_PA; hi += step) {
    if (h(hi) >= 0) {
      for (let i = 0; i < 60; i++) {
        const mid = (lo + hi) / 2
        if (h(mid) >= 0) hi = mid
        else lo = mid
      }
      return { status: 'opens', boostPa: (lo + hi) / 2 }
    }
    lo = hi
  }
  return {
    status: 'never-opens',
    reason: slope <= 0 ? NEVER_REASON : 'pressure downstream of the valve keeps it shut at any boost up to 2 MPa',
  }
}

function inputsFor(s: Scenario, ratio: number, chambers: ChamberCoefficients = chamberCoefficients(s)): BalanceInputs {
  return {
    areas: wastegateAreas(s.wastegate),
    chambers,
    ratio,
    driveAtZeroBoostPa: s.exhaust.driveAtZeroBoostPa,
  }
}

/** Boost that holds the valve at lift x: b_at(x), the spring at F0 + k·x. */
export function boostAtLift(s: Scenario, liftM: number, ratio = s.exhaust.ratio): BoostOutcome {
  const inp = inputsFor(s, ratio)
  const { seatForceN, rateNPerM } = springTotals(s.springs, inp.areas)
  const x = Math.min(Math.max(liftM, 0), s.wastegate.maxLiftM)
  return solveBoost(s, inp, seatForceN + rateNPerM * x, x >= s.wastegate.maxLiftM)
}

function forcesAt(s: Scenario, inp: BalanceInputs, seatForceN: number, boostPa: number): ForceTerm[] {
  const { areas: a, chambers: c } = inp
  const drive = inp.ratio * Math.max(boostPa, 0) + inp.driveAtZeroBoostPa
  const bottom = c.alphaBottom * boostPa + c.betaBottomPa
  const top = c.alphaTop * boostPa + c.betaTopPa
  const down = downstreamPa(s, boostPa, false)
  return [
    { key: 'drive', forceN: drive * a.valveM2, pressurePa: drive, areaM2: a.valveM2 },
    { key: 'bottom', forceN: bottom * a.bottomM2, pressurePa: bottom, areaM2: a.bottomM2 },
    { key: 'spring', forceN: -seatForceN, pressurePa: 0, areaM2: 0 },
    { key: 'top', forceN: -top * a.topM2, pressurePa: top, areaM2: a.topM2 },
    { key: 'downstream', forceN: -down * a.valveBackM2, pressurePa: down, areaM2: a.valveBackM2 },
  ]
}

/** Ratios of the "anywhere from 1:1 to 2:1" answer. */
export const RATIO_RANGE: readonly number[] = Object.freeze(Array.from({ length: 21 }, (_, i) => 1 + i * 0.05))

/** The static balance of a scenario: crack and full-open boost, the forces at crack, and the ratio range. */
export function computeBalance(s: Scenario): BalanceResult {
  const inp = inputsFor(s, s.exhaust.ratio)
  const { seatForceN, rateNPerM } = springTotals(s.springs, inp.areas)
  const fullSpring = seatForceN + rateNPerM * s.wastegate.maxLiftM
  const crack = solveBoost(s, inp, seatForceN, false)
  const fullOpen = solveBoost(s, inp, fullSpring, true)
  const ratioSweep = RATIO_RANGE.map((ratio) => {
    const r = inputsFor(s, ratio, inp.chambers)
    return { ratio, crack: solveBoost(s, r, seatForceN, false), fullOpen: solveBoost(s, r, fullSpring, true) }
  })
  return {
    areas: inp.areas,
    seatForceN,
    rateNPerM,
    maxLiftM: s.wastegate.maxLiftM,
    chambers: inp.chambers,
    ratio: inp.ratio,
    driveAtZeroBoostPa: inp.driveAtZeroBoostPa,
    crack,
    fullOpen,
    forcesAtCrack: crack.status === 'opens' ? forcesAt(s, inp, seatForceN, crack.boostPa) : null,
    ratioSweep,
    overLimit: s.boostLimitPa !== undefined && crack.status === 'opens' && crack.boostPa > s.boostLimitPa,
    supply: regulatedSupply(s),
  }
}
