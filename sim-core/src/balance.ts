import { springTotals, wastegateAreas, type WastegateAreas } from './geometry.ts'
import { AIR } from './gas.ts'
import { flowFunctionFor, type FlowFunction } from './orifice.ts'
import { chamberPlumbing, openAreaM2, type ChamberPorts, type SourceKind } from './pull/chamber-plumbing.ts'
import { chamberGas } from './pull/gases.ts'
import { bracketedRoot } from './bracketed-root.ts'
import { steadyChamberPressurePa } from './steady-chamber.ts'
import { co2BottleState, type Co2BottleState } from './co2.ts'
import type { Scenario } from './scenario.ts'

/**
 * The static level (MODEL.md §2–3, §4b): drive pressure p_em = r·b + p_em0, each chamber's gauge pressure from
 * its plumbing's steady divider (steady-chamber.ts) — affine in boost b, p = α·b + β, wherever one path is open,
 * as in §3 — and the valve cracks where F_net(0) crosses zero. Positive forces open the valve. Where a switching
 * solenoid keeps two paths open the chamber pressure is the compressible divider's, not affine, and the crack is
 * found by a root search; the pull's quasi-static chambers use the same divider, so the two levels agree.
 */

/**
 * Each chamber's gauge pressure as α·b + β. Exact where one path is open; for a switching solenoid's chamber it is
 * the secant through zero boost and 1 bar of boost.
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

/** A chamber's open paths (at the arrangement's duty) and what each leads to, for the steady divider. */
interface ChamberPaths {
  areasM2: Float64Array
  sources: SourceKind[]
  sqrtRT: number
  flow: FlowFunction
}

/**
 * The chambers as the static level sees them: their gauge pressures at any boost, and whether that is affine
 * (one open path each). A closed loop is taken at its floor duty, where it starts a pull.
 */
export interface StaticChambers {
  affine: boolean
  /** The solenoid duty the chambers are taken at (0 without a solenoid). */
  duty: number
  coefficients: ChamberCoefficients
  /** Gauge pressures of the top and bottom chambers at boost b. */
  at(boostPa: number): { topPa: number; bottomPa: number }
}

/**
 * What a pull held in its settling window, for the static balance at the settled lift: the solenoid's mean duty
 * and what the regulator delivered (a bottle cools and a tank falls over a pull), the drive-to-boost ratio the pull
 * showed, and the pressure downstream of the valve. Gauge pressures, Pa.
 */
export interface WindowConditions {
  duty?: number
  suppliedPa?: number
  ratio?: number
  downstreamPa?: number
}

export function staticChambers(s: Scenario, held: WindowConditions = {}): StaticChambers {
  const plumbing = chamberPlumbing(s)
  const c = s.control
  const duty = held.duty ?? (c.kind === 'closed-loop' ? c.dutyMin : (plumbing.fixedDuty ?? 0))
  const regulatedAtRest = regulatedSupply(s)
  const regulated =
    regulatedAtRest !== null && held.suppliedPa !== undefined ? { ...regulatedAtRest, deliveredPa: held.suppliedPa } : regulatedAtRest
  const pAmb = s.ambient.pressurePa
  const temperatureK = s.ambient.temperatureK
  const pathsOf = (ports: ChamberPorts): ChamberPaths => {
    const open = ports.connections.filter((k) => openAreaM2(k, duty) > 0)
    const gas = chamberGas(s, ports.connections)
    return {
      areasM2: Float64Array.from(open.map((k) => openAreaM2(k, duty))),
      sources: open.map((k) => k.source),
      sqrtRT: Math.sqrt(gas.gasConstant * temperatureK),
      flow: flowFunctionFor(gas.gamma),
    }
  }
  /** Gauge pressure of a source at boost b. */
  const source = (kind: SourceKind, b: number): number => {
    switch (kind) {
      case 'intake':
        return b
      case 'ambient':
        return 0
      case 'supply':
        return regulated === null ? b : regulated.deliveredPa
      case 'bleed':
        return plumbing.bleedFraction * b
    }
  }
  const top = pathsOf(plumbing.top)
  const bottom = pathsOf(plumbing.bottom)
  const sourcesPa = new Float64Array(8)
  const pressure = (paths: ChamberPaths, b: number): number => {
    const n = paths.sources.length
    if (n === 0) return 0
    if (n === 1) return source(paths.sources[0]!, b)
    for (let i = 0; i < n; i++) sourcesPa[i] = pAmb + source(paths.sources[i]!, b)
    return steadyChamberPressurePa(paths.areasM2, sourcesPa, n, paths.sqrtRT, paths.flow, pAmb) - pAmb
  }
  const at = (b: number) => ({ topPa: pressure(top, b), bottomPa: pressure(bottom, b) })
  const affine = top.sources.length <= 1 && bottom.sources.length <= 1
  const zero = at(0)
  const one = at(100_000)
  return {
    affine,
    duty,
    coefficients: {
      alphaTop: (one.topPa - zero.topPa) / 100_000,
      betaTopPa: zero.topPa,
      alphaBottom: (one.bottomPa - zero.bottomPa) / 100_000,
      betaBottomPa: zero.bottomPa,
    },
    at,
  }
}

/** Maps a port arrangement to its (α, β) pairs (MODEL.md §3); see ChamberCoefficients for switching solenoids. */
export function chamberCoefficients(s: Scenario): ChamberCoefficients {
  return staticChambers(s).coefficients
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
  chambers: StaticChambers
  ratio: number
  driveAtZeroBoostPa: number
  /** A downstream pressure held fixed (a pull's window), in place of the one the static level works out. */
  downstreamPa?: number
}

/** F_net(x) at boost b (MODEL.md §2), with the spring at `springForceN`. */
function netForce(inp: BalanceInputs, springForceN: number, boostPa: number, downstreamGaugePa: number): number {
  const { areas: a } = inp
  const drive = inp.ratio * Math.max(boostPa, 0) + inp.driveAtZeroBoostPa
  const { topPa, bottomPa } = inp.chambers.at(boostPa)
  return drive * a.valveM2 + bottomPa * a.bottomM2 - springForceN - topPa * a.topM2 - downstreamGaugePa * a.valveBackM2
}

const NEVER_REASON =
  'boost can never open the valve: the top chamber outweighs drive pressure and the bottom chamber at any boost'
/** The highest boost the static solver searches (about 290 psi); beyond it the valve counts as never opening. */
const SEARCH_LIMIT_PA = 2_000_000

/** The boost at which F_net = 0 with the spring at `springForceN`. */
function solveBoost(s: Scenario, inp: BalanceInputs, springForceN: number, atFullOpen: boolean): BoostOutcome {
  const { areas: a } = inp
  const c = inp.chambers.coefficients
  const slope = inp.ratio * a.valveM2 + c.alphaBottom * a.bottomM2 - c.alphaTop * a.topM2
  const held = inp.downstreamPa
  const noDownstream =
    held === undefined && (s.exhaust.downstream.kind === 'vented' || (s.exhaust.downstream.kind === 'restricted' && !atFullOpen))
  if (inp.chambers.affine && (noDownstream || held !== undefined)) {
    // Closed form of MODEL.md §3, with p_dn zero or held.
    const numerator =
      springForceN +
      c.betaTopPa * a.topM2 -
      c.betaBottomPa * a.bottomM2 -
      inp.driveAtZeroBoostPa * a.valveM2 +
      (held ?? 0) * a.valveBackM2
    if (numerator <= 0) {
      return { status: 'open-at-zero-boost', boostPa: slope > 0 ? numerator / slope : 0 }
    }
    if (slope <= 0) return { status: 'never-opens', reason: NEVER_REASON }
    return { status: 'opens', boostPa: numerator / slope }
  }
  // p_dn rises with boost, or a switching solenoid's divider bends the chamber pressure: find the first crossing by
  // a coarse scan, then bisect.
  const h = (b: number) => netForce(inp, springForceN, b, held ?? (noDownstream ? 0 : downstreamPa(s, b, atFullOpen)))
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
    reason: slope <= 0 || noDownstream ? NEVER_REASON : 'pressure downstream of the valve keeps it shut at any boost up to 2 MPa',
  }
}

function inputsFor(s: Scenario, ratio: number, chambers: StaticChambers = staticChambers(s)): BalanceInputs {
  return {
    areas: wastegateAreas(s.wastegate),
    chambers,
    ratio,
    driveAtZeroBoostPa: s.exhaust.driveAtZeroBoostPa,
  }
}

/**
 * The spring force that balances the pressure forces at boost b (MODEL.md §2 solved for the spring): the sum of
 * drive, bottom, top and downstream forces, at the seat or at full lift (p_dn at the full-open flow), at a ratio.
 * A spring of exactly this force (seat force at the seat, seat force + k·x_max at full lift) puts b_crack or b_full
 * at b. Linear in nothing but exact: the chambers' divider and p_dn are evaluated at b itself.
 */
export function springForceAtBoost(s: Scenario, boostPa: number, atFullOpen: boolean, ratio: number = s.exhaust.ratio): number {
  const inp = inputsFor(s, ratio)
  return netForce(inp, 0, boostPa, downstreamPa(s, boostPa, atFullOpen))
}

/**
 * Boost that holds the valve at lift x: b_at(x), the spring at F0 + k·x; at the scenario's own ratio, or under the
 * conditions a pull held in its settling window.
 */
export function boostAtLift(s: Scenario, liftM: number, held: WindowConditions = {}): BoostOutcome {
  const inp: BalanceInputs = { ...inputsFor(s, held.ratio ?? s.exhaust.ratio, staticChambers(s, held)) }
  if (held.downstreamPa !== undefined) inp.downstreamPa = held.downstreamPa
  const { seatForceN, rateNPerM } = springTotals(s.springs, inp.areas)
  const x = Math.min(Math.max(liftM, 0), s.wastegate.maxLiftM)
  return solveBoost(s, inp, seatForceN + rateNPerM * x, x >= s.wastegate.maxLiftM)
}

function forcesAt(s: Scenario, inp: BalanceInputs, seatForceN: number, boostPa: number): ForceTerm[] {
  const { areas: a } = inp
  const drive = inp.ratio * Math.max(boostPa, 0) + inp.driveAtZeroBoostPa
  const { topPa: top, bottomPa: bottom } = inp.chambers.at(boostPa)
  const down = downstreamPa(s, boostPa, false)
  return [
    { key: 'drive', forceN: drive * a.valveM2, pressurePa: drive, areaM2: a.valveM2 },
    { key: 'bottom', forceN: bottom * a.bottomM2, pressurePa: bottom, areaM2: a.bottomM2 },
    { key: 'spring', forceN: -seatForceN, pressurePa: 0, areaM2: 0 },
    { key: 'top', forceN: -top * a.topM2, pressurePa: top, areaM2: a.topM2 },
    { key: 'downstream', forceN: -down * a.valveBackM2, pressurePa: down, areaM2: a.valveBackM2 },
  ]
}

/**
 * The solenoid duty at which the valve of a closed loop cracks at boost b: the base duty a controller starts from (its
 * feed-forward; the loop's PID only trims about it). The static balance at the seat with the chambers at that duty's
 * divider, drive at the scenario's ratio; the duty is clamped to the loop's limits, so a boost the solenoid cannot
 * reach gets the nearer limit. Null for a scenario without a closed loop.
 */
export function dutyToCrackAt(s: Scenario, boostPa: number): number | null {
  const c = s.control
  if (c.kind !== 'closed-loop') return null
  const inp = inputsFor(s, s.exhaust.ratio)
  const { seatForceN } = springTotals(s.springs, inp.areas)
  const down = downstreamPa(s, boostPa, false)
  const net = (duty: number) => netForce({ ...inp, chambers: staticChambers(s, { duty }) }, seatForceN, boostPa, down)
  const fLo = net(c.dutyMin)
  const fHi = net(c.dutyMax)
  // Either end may be the one that opens the valve (duty feeds one chamber and vents the other).
  if (fLo === fHi || Math.sign(fLo) === Math.sign(fHi)) return Math.abs(fLo) <= Math.abs(fHi) ? c.dutyMin : c.dutyMax
  return bracketedRoot(net, c.dutyMin, c.dutyMax, fLo, fHi, 1e-12, 60)
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
    chambers: inp.chambers.coefficients,
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
