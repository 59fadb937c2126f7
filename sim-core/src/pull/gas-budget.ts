import { regulatedSupply, staticChambers } from '../balance.ts'
import { chamberVolumes } from '../geometry.ts'
import { flowFunctionFor, orificeFlowKgS } from '../orifice.ts'
import type { Scenario } from '../scenario.ts'
import { STANDARD_AIR } from '../units.ts'
import { AIR } from '../gas.ts'
import { chamberPlumbing, openAreaM2, type ChamberPorts } from './chamber-plumbing.ts'
import { chamberGas } from './gases.ts'
import type { PullResult } from './pull-result.ts'
import { co2MinimumUsableMassKg } from './supply-endurance.ts'

/**
 * Where a regulated supply's gas goes over a day's running (MODEL.md §4b, gas budget): what one pull costs (every
 * gate's chambers and lines), what a solenoid between the supply and a vent passes while the system is armed and
 * boost is zero, what the lines and chambers hold (lost when they vent), and a session of pulls and armed minutes
 * against a full bottle, or how long a compressor takes to win a pull's gas back.
 */

export interface SessionPlan {
  /** Pulls in the session. */
  pulls: number
  /** Time the system sits armed (solenoid powered, boost about zero) between and around the pulls, s. */
  armedS: number
  /** Whether the top lines and chambers vent after each pull (a dump valve, or a controller that drops the supply). */
  ventAfterEachPull: boolean
}

/** The session a scenario's supply plans for (its sessionPulls, sessionArmedS, ventAfterEachPull; defaults in scenario.ts). */
export function sessionPlanOf(s: Scenario): SessionPlan | null {
  const supply = s.supply
  if (supply.kind === 'boost') return null
  return { pulls: supply.sessionPulls, armedS: supply.sessionArmedS, ventAfterEachPull: supply.ventAfterEachPull }
}

export interface GasBudget {
  /** Gas one pull costs, every gate: drawn during the pull and refilling the chambers after it, kg. */
  perPullKg: number
  /** What the supply passes while armed at zero boost, every gate, kg/s (0 for sealed chambers). */
  armedKgPerS: number
  /** What the lines and chambers on the supply hold at zero boost, every gate, kg. */
  heldKg: number
  session: {
    plan: SessionPlan
    kg: number
    /** The session's gas over what a full bottle gives before it can no longer hold the setpoint (CO₂). */
    shareOfBottle: number | null
    /** The session needs more than a full bottle. */
    emptiesBottle: boolean
  }
  /** Compressor: seconds of running, at the tank's mid pressure, to win one pull's gas back. */
  tankRecoveryS: number | null
}

/** The supply's own gas flow into the chambers that draw on it, at zero boost, every gate, kg/s. */
function armedFlowKgS(s: Scenario): number {
  const regulated = regulatedSupply(s)
  if (regulated === null) return 0
  const plumbing = chamberPlumbing(s)
  const pAmb = s.ambient.pressurePa
  // Armed at zero boost, with the solenoid where the static level takes it (a closed loop at its floor duty).
  const statics = staticChambers(s)
  const duty = statics.duty
  const chambers = statics.at(0)
  const fromSupply = (ports: ChamberPorts, chamberGaugePa: number) => {
    const gas = chamberGas(s, ports.connections)
    const sqrtRT = Math.sqrt(gas.gasConstant * s.ambient.temperatureK)
    const flow = flowFunctionFor(gas.gamma)
    let kg = 0
    for (const k of ports.connections) {
      if (k.source !== 'supply') continue
      kg += Math.max(0, orificeFlowKgS(openAreaM2(k, duty), pAmb + regulated.deliveredPa, pAmb + chamberGaugePa, sqrtRT, flow))
    }
    return kg
  }
  return s.wastegate.count * (fromSupply(plumbing.top, chambers.topPa) + fromSupply(plumbing.bottom, chambers.bottomPa))
}

/** Gas the supply-fed chambers and their lines hold at zero boost, every gate, kg. */
function heldKg(s: Scenario): number {
  const plumbing = chamberPlumbing(s)
  const volumes = chamberVolumes(s.wastegate)
  const at = staticChambers(s).at(0)
  const pAmb = s.ambient.pressurePa
  let kg = 0
  for (const [ports, volumeM3, gaugePa] of [
    [plumbing.top, volumes.topM3, at.topPa],
    [plumbing.bottom, volumes.bottomM3, at.bottomPa],
  ] as const) {
    if (!ports.connections.some((k) => k.source === 'supply')) continue
    const gas = chamberGas(s, ports.connections)
    kg += ((pAmb + gaugePa) * (volumeM3 + ports.lineVolumeM3)) / (gas.gasConstant * s.ambient.temperatureK)
  }
  return kg * s.wastegate.count
}

/**
 * The gas budget of a scenario's regulated supply from one of its pulls, or null when boost itself feeds the ports.
 * Throws a RangeError naming the field for a session plan that cannot be.
 */
export function gasBudget(s: Scenario, pull: PullResult, given?: SessionPlan): GasBudget | null {
  const plan = given ?? sessionPlanOf(s)
  const supply = s.supply
  if (supply.kind === 'boost' || plan === null) return null
  if (!(Number.isInteger(plan.pulls) && plan.pulls >= 0)) throw new RangeError(`plan.pulls must be a whole number of at least 0, not ${plan.pulls}`)
  if (!(plan.armedS >= 0 && Number.isFinite(plan.armedS))) {
    throw new RangeError(`plan.armedS must be a number of at least 0, not ${plan.armedS}`)
  }
  const perPullKg = pull.metrics.gasUsedPerPullKg ?? 0
  const armedKgPerS = armedFlowKgS(s)
  const held = heldKg(s)
  const kg = plan.pulls * (perPullKg + (plan.ventAfterEachPull ? held : 0)) + plan.armedS * armedKgPerS
  let shareOfBottle: number | null = null
  let tankRecoveryS: number | null = null
  if (supply.kind === 'co2') {
    const hold = s.ambient.pressurePa + supply.regulatorSetpointPa + supply.regulatorDroopPa
    const bottle = { volumeM3: supply.bottleVolumeM3, fillMassKg: supply.fillMassKg, temperatureK: supply.bottleTemperatureK }
    const usable = supply.fillMassKg - co2MinimumUsableMassKg(bottle, hold)
    shareOfBottle = usable > 0 ? kg / usable : Number.POSITIVE_INFINITY
  } else {
    // Free-air delivery falls linearly to nothing at the compressor's top pressure (scenario.ts); taken mid-cycle.
    const mid = 0.5 * (supply.cutInPa + supply.cutOutPa)
    const ratedKgS = (STANDARD_AIR.pressurePa / (AIR.gasConstant * STANDARD_AIR.temperatureK)) * supply.ratedFlowM3PerS
    const delivered = ratedKgS * Math.max(0, 1 - mid / supply.maxPressurePa)
    tankRecoveryS = delivered > 0 ? perPullKg / delivered : Number.POSITIVE_INFINITY
  }
  return {
    perPullKg,
    armedKgPerS,
    heldKg: held,
    session: { plan: { ...plan }, kg, shareOfBottle, emptiesBottle: shareOfBottle !== null && shareOfBottle > 1 },
    tankRecoveryS,
  }
}
