import { co2BottlePressurePa, co2SaturatedLiquidDensityKgM3, co2SaturatedVapourDensityKgM3, co2SaturationPressurePa, CO2_CRITICAL } from '../co2.ts'
import { compressorConstants } from '../compressor.ts'
import { interpolateTable } from '../engine.ts'
import { AIR } from '../gas.ts'
import { springTotals, wastegateAreas } from '../geometry.ts'
import { flowFunctionFor, orificeFlowKgS, type FlowFunction } from '../orifice.ts'
import type { Scenario } from '../scenario.ts'
import { STANDARD_AIR } from '../units.ts'
import { chamberPlumbing, type SourceKind } from './chamber-plumbing.ts'
import { CO2_CHAMBER_GAS, exhaustGas } from './gases.ts'
import type { HybridSystem } from './hybrid-integrator.ts'

/**
 * The mean-value model of one wide-open-throttle pull (MODEL.md §4 with the guards of §4a), as a hybrid
 * system for the event-locating integrator: the valve is seated, free, or on its full-lift stop, and a
 * compressor (when the supply has one) is running or not. Pressures inside are absolute, Pa.
 */

export type ValveMode = 'seated' | 'free' | 'full'

export interface PullMode {
  readonly valve: ValveMode
  readonly compressorOn: boolean
}

/** Index of each state in the state vector; −1 where the state is absent in this configuration. */
export interface StateLayout {
  readonly size: number
  readonly omega: number
  readonly intake: number
  /** Drive pressure, turbine mode only. */
  readonly exhaust: number
  readonly lift: number
  readonly velocity: number
  /** Chamber pressures, only where the chamber is integrated (not quasi-static). */
  readonly top: number
  readonly bottom: number
  /** CO₂ in the bottle (kg) or tank pressure (Pa absolute). */
  readonly supply: number
  /** Closed-loop controller's integral of boost error, Pa·s. */
  readonly integral: number
  /** Gas drawn from a CO₂ bottle or a tank since the start, kg. */
  readonly gasUsed: number
}

export type ChamberTreatment = 'auto' | 'full' | 'quasi-static'

export interface PullModelOptions {
  /** Whether actuator chambers are integrated or quasi-static; 'auto' applies the stiffness rule of MODEL.md §4a. */
  chambers?: ChamberTreatment
}

/** Everything the model knows at one instant (pressures gauge unless named absolute). */
export interface PullOutputs {
  rpm: number
  boostPa: number
  drivePa: number
  turbineOutletPa: number
  downstreamPa: number
  topPa: number
  bottomPa: number
  /** Gauge pressure at the regulator inlet (bottle or tank), or boost when boost is the source. */
  supplySourcePa: number
  /** What the regulator delivers (boost itself when boost is the source). */
  supplyDeliveredPa: number
  duty: number
  liftM: number
  shaftSpeedRadS: number
  netForceN: number
  compressorFlowKgS: number
  engineFlowKgS: number
  exhaustFlowKgS: number
  wastegateFlowKgS: number
  turbineFlowKgS: number
  /** Π0 − Π: negative once the compressor is past its zero-flow line. */
  zeroFlowMargin: number
  supplyDrawKgS: number
  compressorFlowToTankKgS: number
  targetBoostPa: number
}

/** Duty past a limit over which the closed loop's integral fades out (conditional integration, see evaluate). */
export const INTEGRAL_FADE_DUTY = 0.02

/** The stiffness, C_d·A·√(R·T)/V, above which a chamber is treated as quasi-static (MODEL.md §4a), 1/s. */
export const QUASI_STATIC_ABOVE_PER_S = 50

const SOURCE_CODE: Record<SourceKind, number> = { intake: 0, ambient: 1, supply: 2, bleed: 3 }

interface ChamberModel {
  readonly name: 'top' | 'bottom'
  readonly index: number
  readonly sources: Int8Array
  readonly areas: Float64Array
  readonly byDuty: Uint8Array
  readonly sqrtRT: number
  readonly RT: number
  readonly flow: FlowFunction
  readonly volume0M3: number
  /** dV/dx: −A_p for the top chamber, +(A_p − A_s) for the bottom. */
  readonly volumePerLift: number
  readonly drawsSupply: boolean
}

export interface PullModel {
  readonly layout: StateLayout
  readonly system: HybridSystem<PullMode>
  readonly absoluteTolerance: number[]
  readonly chamberTreatment: { top: 'full' | 'quasi-static'; bottom: 'full' | 'quasi-static' }
  /** Outputs at a state (a fresh object). */
  outputs(t: number, y: readonly number[], mode: PullMode): PullOutputs
  /** The starting state at shaft speed `omega0`, rad/s. */
  initialState(omega0: number): { y: number[]; mode: PullMode }
  /** Gas held in the chambers that the supply feeds, kg (p·V/(R·T) of each). */
  supplyChamberGasKg(t: number, y: readonly number[], mode: PullMode): number
}

const bad = (path: string, message: string) => new RangeError(`${path} ${message}`)

/**
 * Pressure of a CO₂ bottle as its contents are drawn, for the time step: the saturation pressure while liquid
 * remains, else the pressure alone from co2.ts (the phase split and warning text of co2BottleState are for reports).
 */
function bottlePressureFunction(volumeM3: number, temperatureK: number): (massKg: number) => number {
  const pressure = (m: number) => co2BottlePressurePa({ volumeM3, massKg: Math.max(m, 1e-9), temperatureK })
  if (temperatureK < CO2_CRITICAL.temperatureK) {
    const pSat = co2SaturationPressurePa(temperatureK)
    const lightest = co2SaturatedVapourDensityKgM3(temperatureK) * volumeM3
    const densest = co2SaturatedLiquidDensityKgM3(temperatureK) * volumeM3
    return (m) => (m >= lightest && m <= densest ? pSat : pressure(m))
  }
  return pressure
}

export function buildPullModel(s: Scenario, options: PullModelOptions = {}): PullModel {
  const treatment = options.chambers ?? 'auto'
  if (!['auto', 'full', 'quasi-static'].includes(treatment)) {
    throw bad('options.chambers', `must be "auto", "full" or "quasi-static", not ${String(treatment)}`)
  }
  const pAmb = s.ambient.pressurePa
  const tAmb = s.ambient.temperatureK
  const e = s.engine
  const w = s.wastegate
  const x = s.exhaust
  const areas = wastegateAreas(w)
  const { seatForceN, rateNPerM } = springTotals(s.springs, areas)
  const xMax = w.maxLiftM
  if (w.topChamberVolumeM3 <= areas.topM2 * xMax) {
    throw bad(
      'wastegate.topChamberVolumeM3',
      `must exceed the volume the piston sweeps at full lift (${(areas.topM2 * xMax * 1e6).toFixed(1)} cm³)`,
    )
  }

  // Engine.
  const rpm0 = e.rpmStart
  const rpmSpan = e.rpmEnd - e.rpmStart
  const duration = e.pullDurationS
  const fuelFactor = 1 + 1 / e.airFuelRatio
  const veKeys = e.volumetricEfficiencyByRpm?.map((p) => p.rpm) ?? null
  const veValues = e.volumetricEfficiencyByRpm?.map((p) => p.volumetricEfficiency) ?? null
  const veConstant = e.volumetricEfficiency
  const flowPerRpm = e.displacementM3 / (120 * AIR.gasConstant)
  const icEffectiveness = e.intercoolerEffectiveness ?? null
  const chargeFixedK = e.chargeTemperatureK
  const intakeFactor = AIR.gasConstant / e.intakeVolumeM3

  // Turbo.
  const comp = compressorConstants(s.turbo, s.ambient)
  const etaC = s.turbo.compressorEfficiency
  const inertia = s.turbo.inertiaKgM2
  const friction = s.turbo.frictionWPerRad2S2
  const omegaMin = s.turbo.idleSpeedRadS
  const etaT = s.turbo.turbineEfficiency

  // Exhaust.
  const gasE = exhaustGas(x)
  const flowE = flowFunctionFor(gasE.gamma)
  const tEm = e.exhaustTemperatureK
  const sqrtRTe = Math.sqrt(gasE.gasConstant * tEm)
  const expE = (gasE.gamma - 1) / gasE.gamma
  const turbinePowerFactor = gasE.cp * tEm * etaT
  const exhaustFactor = (gasE.gasConstant * tEm) / e.exhaustVolumeM3
  const turbineMode = x.mode === 'turbine'
  const ratio = x.ratio
  const driveAtZeroPa = x.driveAtZeroBoostPa
  const backCoeff = x.backPressureCoefficientPaPerKg2S2
  const turbineArea = x.turbineAreaM2
  const downstreamKind = x.downstream.kind
  const restrictedCoeff = x.downstream.kind === 'restricted' ? x.downstream.coefficientPaPerKg2S2 : 0

  // Valve.
  const gateCount = w.count
  const curtainPerLift = Math.PI * w.valveDiameterM
  const valveArea = areas.valveM2
  const valveCd = w.valveDischargeCoefficient
  const mass = w.movingMassKg
  const damping = 2 * w.dampingRatio * Math.sqrt(rateNPerM * mass)

  // Supply.
  const supply = s.supply
  const supplyKind = supply.kind === 'boost' ? 0 : supply.kind === 'co2' ? 1 : 2
  const setpointPa = supply.kind === 'boost' ? 0 : supply.regulatorSetpointPa
  const droopPa = supply.kind === 'boost' ? 0 : supply.regulatorDroopPa
  let bottlePressure: (m: number) => number = () => pAmb
  let tankFactor = 0
  let compressorRatedKgS = 0
  let compressorMaxGaugePa = 1
  let cutInAbs = 0
  let cutOutAbs = 0
  if (supply.kind === 'co2') {
    try {
      co2BottlePressurePa({ volumeM3: supply.bottleVolumeM3, massKg: supply.fillMassKg, temperatureK: supply.bottleTemperatureK })
    } catch (error) {
      throw bad('supply.fillMassKg', `is not a possible fill: ${(error as Error).message}`)
    }
    bottlePressure = bottlePressureFunction(supply.bottleVolumeM3, supply.bottleTemperatureK)
  } else if (supply.kind === 'compressor') {
    if (supply.cutOutPa <= supply.cutInPa) throw bad('supply.cutOutPa', 'must be above supply.cutInPa')
    if (supply.maxPressurePa <= supply.cutOutPa) throw bad('supply.maxPressurePa', 'must be above supply.cutOutPa')
    tankFactor = (AIR.gasConstant * tAmb) / supply.tankVolumeM3
    // Free-air delivery is rated at standard air (units.ts); its mass flow is ρ_std·Q.
    compressorRatedKgS = (STANDARD_AIR.pressurePa / (AIR.gasConstant * STANDARD_AIR.temperatureK)) * supply.ratedFlowM3PerS
    compressorMaxGaugePa = supply.maxPressurePa
    cutInAbs = pAmb + supply.cutInPa
    cutOutAbs = pAmb + supply.cutOutPa
  }
  const consumesGas = supplyKind !== 0

  // Control.
  const plumbing = chamberPlumbing(s)
  const c = s.control
  const loop =
    c.kind === 'closed-loop'
      ? {
          kp: c.proportionalPerPa,
          ki: c.integralPerPaS,
          kd: c.derivativeSPerPa,
          dutyMin: c.dutyMin,
          dutyMax: c.dutyMax,
          targetKeys: c.targetByRpm?.map((p) => p.rpm) ?? null,
          targetValues: c.targetByRpm?.map((p) => p.boostPa) ?? null,
          target: c.targetBoostPa,
        }
      : null
  if (loop && loop.dutyMax < loop.dutyMin) throw bad('control.dutyMax', 'must be at least control.dutyMin')
  if (loop?.targetKeys) {
    for (let i = 1; i < loop.targetKeys.length; i++) {
      if (loop.targetKeys[i]! <= loop.targetKeys[i - 1]!) throw bad(`control.targetByRpm.${i}.rpm`, 'must be larger than the rpm before it')
    }
  }
  const fixedDuty = plumbing.fixedDuty ?? 0
  const bleedFraction = plumbing.bleedFraction

  // Chambers.
  // Chamber gas sits at ambient temperature (MODEL.md §4a).
  const tCh = tAmb
  const makeChamber = (name: 'top' | 'bottom'): Omit<ChamberModel, 'index'> & { quasi: boolean } => {
    const conns = plumbing[name]
    const onCo2 = supplyKind === 1 && conns.some((k) => k.source === 'supply')
    const gas = onCo2 ? CO2_CHAMBER_GAS : AIR
    const sqrtRT = Math.sqrt(gas.gasConstant * tCh)
    const volume0M3 = name === 'top' ? w.topChamberVolumeM3 : w.bottomChamberVolumeM3
    const volumePerLift = name === 'top' ? -areas.topM2 : areas.bottomM2
    const smallest = name === 'top' ? volume0M3 - areas.topM2 * xMax : volume0M3
    const stiffnessPerS = (conns.reduce((sum, k) => sum + k.dischargeAreaM2, 0) * sqrtRT) / smallest
    const quasi = treatment === 'quasi-static' || (treatment === 'auto' && stiffnessPerS > QUASI_STATIC_ABOVE_PER_S)
    return {
      name,
      sources: Int8Array.from(conns.map((k) => SOURCE_CODE[k.source])),
      areas: Float64Array.from(conns.map((k) => k.dischargeAreaM2)),
      byDuty: Uint8Array.from(conns.map((k) => (k.byDuty ? 1 : 0))),
      sqrtRT,
      RT: gas.gasConstant * tCh,
      flow: flowFunctionFor(gas.gamma),
      volume0M3,
      volumePerLift,
      drawsSupply: consumesGas && conns.some((k) => k.source === 'supply'),
      quasi,
    }
  }
  const topSpec = makeChamber('top')
  const bottomSpec = makeChamber('bottom')

  // State layout.
  let next = 0
  const take = (present: boolean) => (present ? next++ : -1)
  const omegaI = take(true)
  const intakeI = take(true)
  const exhaustI = take(turbineMode)
  const liftI = take(true)
  const velocityI = take(true)
  const topI = take(!topSpec.quasi)
  const bottomI = take(!bottomSpec.quasi)
  const supplyI = take(supplyKind !== 0)
  const integralI = take(loop !== null)
  const gasI = take(consumesGas)
  const layout: StateLayout = Object.freeze({
    size: next,
    omega: omegaI,
    intake: intakeI,
    exhaust: exhaustI,
    lift: liftI,
    velocity: velocityI,
    top: topI,
    bottom: bottomI,
    supply: supplyI,
    integral: integralI,
    gasUsed: gasI,
  })
  const top: ChamberModel = { ...topSpec, index: topI }
  const bottom: ChamberModel = { ...bottomSpec, index: bottomI }

  // Scratch for one evaluation; the model is pure from outside, this only avoids allocation in the hot path.
  const src = new Float64Array(4)
  let chamberFlowIn = 0
  let chamberDraw = 0

  /** Net inflow into a chamber at pressure p (and the part drawn from the supply), into the scratch. */
  const chamberFlows = (ch: ChamberModel, p: number, duty: number) => {
    let sum = 0
    let draw = 0
    const n = ch.sources.length
    for (let i = 0; i < n; i++) {
      const a = ch.byDuty[i] ? ch.areas[i]! * duty : ch.areas[i]!
      const m = orificeFlowKgS(a, src[ch.sources[i]!]!, p, ch.sqrtRT, ch.flow)
      sum += m
      // A relieving regulator vents what flows back: only what leaves the supply is spent.
      if (ch.sources[i] === 2 && m > 0) draw += m
    }
    chamberFlowIn = sum
    chamberDraw = draw
  }

  /** Quasi-static chamber pressure: the pressure at which its orifice flows balance. */
  const quasiStaticPressure = (ch: ChamberModel, duty: number): number => {
    let lo = Infinity
    let hi = -Infinity
    let active = 0
    let only = pAmb
    const n = ch.sources.length
    for (let i = 0; i < n; i++) {
      const a = ch.byDuty[i] ? ch.areas[i]! * duty : ch.areas[i]!
      if (a <= 0) continue
      const p = src[ch.sources[i]!]!
      active++
      only = p
      if (p < lo) lo = p
      if (p > hi) hi = p
    }
    if (active <= 1 || hi - lo <= 1e-9 * hi) return active === 0 ? pAmb : only
    // Illinois method on the bracket [lo, hi]; the net inflow falls as the chamber pressure rises.
    let fLo = 0
    chamberFlows(ch, lo, duty)
    fLo = chamberFlowIn
    chamberFlows(ch, hi, duty)
    let fHi = chamberFlowIn
    let side = 0
    for (let i = 0; i < 60; i++) {
      const p = (lo * fHi - hi * fLo) / (fHi - fLo)
      chamberFlows(ch, p, duty)
      const f = chamberFlowIn
      if (f === 0 || hi - lo <= 1e-12 * hi) return p
      if (f > 0) {
        lo = p
        fLo = f
        if (side === 1) fHi *= 0.5
        side = 1
      } else {
        hi = p
        fHi = f
        if (side === -1) fLo *= 0.5
        side = -1
      }
    }
    return 0.5 * (lo + hi)
  }

  /** p_dn of a restricted dump: p = p_amb + K·ṁ_wg(p)², a few Newton steps from p_amb, kept in [p_amb, p_em]. */
  const restrictedDownstream = (gateArea: number, pem: number): number => {
    let p = pAmb
    for (let i = 0; i < 5; i++) {
      const m = orificeFlowKgS(gateArea, pem, p, sqrtRTe, flowE)
      const g = p - pAmb - restrictedCoeff * m * m
      const dp = 1e-6 * pem
      const m2 = orificeFlowKgS(gateArea, pem, p + dp, sqrtRTe, flowE)
      const slope = 1 - (restrictedCoeff * (m2 * m2 - m * m)) / dp
      p = Math.min(Math.max(p - g / slope, pAmb), pem)
    }
    return p
  }

  const out: PullOutputs = {
    rpm: 0, boostPa: 0, drivePa: 0, turbineOutletPa: 0, downstreamPa: 0, topPa: 0, bottomPa: 0, supplySourcePa: 0,
    supplyDeliveredPa: 0, duty: 0, liftM: 0, shaftSpeedRadS: 0, netForceN: 0, compressorFlowKgS: 0, engineFlowKgS: 0,
    exhaustFlowKgS: 0, wastegateFlowKgS: 0, turbineFlowKgS: 0, zeroFlowMargin: 0, supplyDrawKgS: 0,
    compressorFlowToTankKgS: 0, targetBoostPa: 0,
  }

  /**
   * One evaluation of the model: derivatives into `dy` (when given) and the outputs into `out`. With
   * `quasiStatic` every chamber takes its quasi-static pressure (the starting state of a pull).
   */
  const evaluate = (t: number, y: readonly number[], mode: PullMode, dy: number[] | null, quasiStatic = false): void => {
    const rpm = rpm0 + rpmSpan * (t < duration ? (t > 0 ? t / duration : 0) : 1)
    const omegaState = y[omegaI]!
    const omega = omegaState > omegaMin ? omegaState : omegaMin
    const pim = y[intakeI]!
    const pr = pim / pAmb

    // Compressor on its speed line (compressor.ts, inlined for speed).
    // Powers as exp(k·ln x): the same values as `**` to a few ulps, at a third of the cost on this path.
    const u = omega * comp.tipRadiusM
    const rise = Math.exp(Math.log(1 + comp.headPerTipSpeed2 * u * u) / comp.exponent) - 1
    const zc = pr > 1 ? (pr - 1) / rise : 0
    const mc = zc >= 1 ? 0 : comp.flowPerTipSpeed * u * Math.sqrt(1 - zc * zc)
    const work = pr > 1 ? Math.exp(comp.exponent * Math.log(pr)) - 1 : 0
    const pc = mc * comp.powerPerUnitWork * work

    // Engine.
    const tIm = icEffectiveness === null ? chargeFixedK : tAmb * (1 + ((1 - icEffectiveness) * work) / etaC)
    const ve = veKeys === null ? veConstant : interpolateTable(veKeys, veValues!, rpm)
    const meng = (ve * pim * flowPerRpm * rpm) / tIm
    const mexh = meng * fuelFactor
    const dpim = intakeFactor * tIm * (mc - meng)

    // Valve position.
    const lift = mode.valve === 'seated' ? 0 : mode.valve === 'full' ? xMax : y[liftI]!
    const vel = mode.valve === 'free' ? y[velocityI]! : 0
    const liftPos = lift > 0 ? lift : 0
    const curtain = curtainPerLift * liftPos
    const gateArea = valveCd * gateCount * (curtain < valveArea ? curtain : valveArea)

    // Drive pressure, gate and turbine flows.
    let pem: number
    let pto: number
    let pdn: number
    let mwg: number
    let mt: number
    let dpem = 0
    if (!turbineMode) {
      const boost = pim - pAmb
      // §4a: drive pressure never below the turbine outlet (taken at the whole exhaust flow), so the shaft is never driven backwards.
      const floor = pAmb + backCoeff * mexh * mexh
      pem = pAmb + ratio * (boost > 0 ? boost : 0) + driveAtZeroPa
      if (pem < floor) pem = floor
      pdn = downstreamKind === 'vented' ? pAmb : downstreamKind === 'recirculated' ? floor : gateArea > 0 ? restrictedDownstream(gateArea, pem) : pAmb
      mwg = orificeFlowKgS(gateArea, pem, pdn, sqrtRTe, flowE)
      mt = mexh - mwg
      if (mt < 0) mt = 0
      pto = downstreamKind === 'recirculated' ? floor : pAmb + backCoeff * mt * mt
    } else {
      pem = y[exhaustI]!
      // p_to = p_amb + K_ex·ṁ², with ṁ the turbine flow (plus the gate's when it is plumbed back): a few fixed-point steps.
      pto = pAmb + backCoeff * mexh * mexh
      mt = 0
      mwg = 0
      pdn = pAmb
      for (let i = 0; i < 3; i++) {
        mt = orificeFlowKgS(turbineArea, pem, pto, sqrtRTe, flowE)
        pdn = downstreamKind === 'vented' ? pAmb : downstreamKind === 'recirculated' ? pto : gateArea > 0 ? restrictedDownstream(gateArea, pem) : pAmb
        mwg = orificeFlowKgS(gateArea, pem, pdn, sqrtRTe, flowE)
        const through = downstreamKind === 'recirculated' ? mt + mwg : mt
        pto = pAmb + backCoeff * through * through
      }
      dpem = exhaustFactor * (mexh - mt - mwg)
    }
    const pt = mt > 0 && pem > pto ? mt * turbinePowerFactor * (1 - Math.exp(expE * Math.log(pto / pem))) : 0
    const net = pt - pc - friction * omega * omega
    let domega = net / (inertia * omega)
    if (omegaState <= omegaMin && domega < 0) domega = 0

    // Supply and regulator.
    let sourcePa: number
    let deliveredAbs: number
    if (supplyKind === 0) {
      sourcePa = pim - pAmb
      deliveredAbs = pim
    } else {
      const pSource = supplyKind === 1 ? bottlePressure(y[supplyI]!) : y[supplyI]!
      sourcePa = pSource - pAmb
      let reg = sourcePa - droopPa
      if (reg > setpointPa) reg = setpointPa
      if (reg < 0) reg = 0
      deliveredAbs = pAmb + reg
    }

    // Solenoid duty: fixed, or the closed loop's PID on boost error, its derivative on boost itself (dp_im/dt of the
    // model, so a step in the target does not kick the solenoid).
    let duty = fixedDuty
    let target = 0
    let dI = 0
    if (loop !== null) {
      target = loop.targetKeys === null ? loop.target : interpolateTable(loop.targetKeys, loop.targetValues!, rpm)
      const err = target - (pim - pAmb)
      const raw = loop.kp * err + loop.ki * y[integralI]! - loop.kd * dpim
      duty = raw < loop.dutyMin ? loop.dutyMin : raw > loop.dutyMax ? loop.dutyMax : raw
      // Anti-windup by conditional integration: the integral stops while the command is past a duty limit. While the
      // turbo spools the solenoid sits at its limit with the error large for a second or more; back-calculation would
      // carry the integral to that limit by the time boost arrives (MODEL.md §4 Control). Fading over the last
      // INTEGRAL_FADE_DUTY keeps the right-hand side continuous, which the step-size control needs.
      const beyond = raw - duty
      const fade = 1 - (beyond < 0 ? -beyond : beyond) / INTEGRAL_FADE_DUTY
      dI = fade > 0 ? err * fade : 0
    }

    // Chambers.
    src[0] = pim
    src[1] = pAmb
    src[2] = deliveredAbs
    src[3] = pAmb + bleedFraction * (pim - pAmb)
    let draw = 0
    let pTop: number
    if (top.index >= 0 && !quasiStatic) {
      pTop = y[top.index]!
      chamberFlows(top, pTop, duty)
      if (dy) {
        const vol = top.volume0M3 + top.volumePerLift * liftPos
        dy[top.index] = (top.RT * chamberFlowIn - pTop * top.volumePerLift * vel) / vol
      }
    } else {
      pTop = quasiStaticPressure(top, duty)
      chamberFlows(top, pTop, duty)
    }
    if (top.drawsSupply) draw += chamberDraw
    let pBot: number
    if (bottom.index >= 0 && !quasiStatic) {
      pBot = y[bottom.index]!
      chamberFlows(bottom, pBot, duty)
      if (dy) {
        const vol = bottom.volume0M3 + bottom.volumePerLift * liftPos
        dy[bottom.index] = (bottom.RT * chamberFlowIn - pBot * bottom.volumePerLift * vel) / vol
      }
    } else {
      pBot = quasiStaticPressure(bottom, duty)
      chamberFlows(bottom, pBot, duty)
    }
    if (bottom.drawsSupply) draw += chamberDraw

    // Force on the valve, positive opens (MODEL.md §2).
    const force =
      (pem - pAmb) * valveArea +
      (pBot - pAmb) * areas.bottomM2 -
      (seatForceN + rateNPerM * liftPos) -
      (pTop - pAmb) * areas.topM2 -
      (pdn - pAmb) * areas.valveBackM2

    let toTank = 0
    if (supplyKind === 2 && mode.compressorOn) {
      const gauge = y[supplyI]! - pAmb
      const share = 1 - gauge / compressorMaxGaugePa
      toTank = share > 0 ? compressorRatedKgS * (share < 1 ? share : 1) : 0
    }

    if (dy) {
      dy[omegaI] = domega
      dy[intakeI] = dpim
      if (exhaustI >= 0) dy[exhaustI] = dpem
      if (mode.valve === 'free') {
        dy[liftI] = vel
        dy[velocityI] = (force - damping * vel) / mass
      } else {
        dy[liftI] = 0
        dy[velocityI] = 0
      }
      if (supplyKind === 1) dy[supplyI] = -draw
      else if (supplyKind === 2) dy[supplyI] = tankFactor * (toTank - draw)
      if (integralI >= 0) dy[integralI] = dI
      if (gasI >= 0) dy[gasI] = draw
    }

    out.netForceN = force
    // The derivative path needs nothing more; outputs, guards and the start state read the rest.
    if (dy) return
    out.rpm = rpm
    out.boostPa = pim - pAmb
    out.drivePa = pem - pAmb
    out.turbineOutletPa = pto - pAmb
    out.downstreamPa = pdn - pAmb
    out.topPa = pTop - pAmb
    out.bottomPa = pBot - pAmb
    out.supplySourcePa = sourcePa
    out.supplyDeliveredPa = deliveredAbs - pAmb
    out.duty = duty
    out.liftM = liftPos
    out.shaftSpeedRadS = omegaState
    out.compressorFlowKgS = mc
    out.engineFlowKgS = meng
    out.exhaustFlowKgS = mexh
    out.wastegateFlowKgS = mwg
    out.turbineFlowKgS = mt
    out.zeroFlowMargin = rise + 1 - pr
    out.supplyDrawKgS = draw
    out.compressorFlowToTankKgS = toTank
    out.targetBoostPa = target
  }

  /** Net force with the valve at lift `liftM` and the rest of the state as given. */
  const forceAtLift = (t: number, y: readonly number[], mode: PullMode, valve: ValveMode): number => {
    evaluate(t, y, valve === mode.valve ? mode : { valve, compressorOn: mode.compressorOn }, null)
    return out.netForceN
  }

  const guards = (t: number, y: readonly number[], mode: PullMode): number[] => {
    let g0: number
    let g1 = -1
    if (mode.valve === 'seated') g0 = forceAtLift(t, y, mode, 'seated')
    else if (mode.valve === 'full') g0 = -forceAtLift(t, y, mode, 'full')
    else {
      g0 = -y[liftI]!
      g1 = y[liftI]! - xMax
    }
    let g2 = -1
    if (supplyKind === 2) g2 = mode.compressorOn ? y[supplyI]! - cutOutAbs : cutInAbs - y[supplyI]!
    return [g0, g1, g2]
  }

  const onEvent = (t: number, y: readonly number[], mode: PullMode, index: number): { y: number[]; mode: PullMode } => {
    const yy = [...y]
    if (index === 2) return { y: yy, mode: { valve: mode.valve, compressorOn: !mode.compressorOn } }
    let valve: ValveMode = mode.valve
    if (mode.valve === 'seated') {
      valve = 'free'
      yy[liftI] = 0
    } else if (mode.valve === 'full') {
      valve = 'free'
      yy[liftI] = xMax
    } else if (index === 0) {
      // Seat contact: the valve stops dead; it stays seated while the net force presses it shut.
      yy[liftI] = 0
      valve = forceAtLift(t, yy, mode, 'seated') <= 0 ? 'seated' : 'free'
    } else {
      yy[liftI] = xMax
      valve = forceAtLift(t, yy, mode, 'full') >= 0 ? 'full' : 'free'
    }
    yy[velocityI] = 0
    return { y: yy, mode: { valve, compressorOn: mode.compressorOn } }
  }

  const system: HybridSystem<PullMode> = {
    size: layout.size,
    derivative: (t, y, mode) => {
      const dy = new Array<number>(layout.size)
      evaluate(t, y, mode, dy)
      return dy
    },
    derivativeInto: (t, y, mode, dy) => evaluate(t, y, mode, dy),
    guards,
    // In free flight the guards are the lift itself: cheap to check inside each step.
    interiorChecks: (mode) => (mode.valve === 'free' ? 3 : 0),
    onEvent,
    watches: (_t, y, mode) => [(mode.valve === 'seated' ? 0 : mode.valve === 'full' ? xMax : y[liftI]!) - w.crackThresholdM],
  }

  /** The state a pull starts from: intake (and drive) pressure in balance at the starting shaft speed. */
  const initialState = (omega0: number): { y: number[]; mode: PullMode } => {
    const y = new Array<number>(layout.size).fill(0)
    y[omegaI] = Math.max(omega0, omegaMin)
    y[intakeI] = pAmb
    if (exhaustI >= 0) y[exhaustI] = pAmb
    if (topI >= 0) y[topI] = pAmb
    if (bottomI >= 0) y[bottomI] = pAmb
    if (supplyKind === 1 && supply.kind === 'co2') y[supplyI] = supply.fillMassKg
    const tankStart = supply.kind === 'compressor' ? pAmb + (supply.initialTankPa ?? supply.cutOutPa) : 0
    if (supplyKind === 2) y[supplyI] = tankStart
    const mode: PullMode = { valve: 'seated', compressorOn: supplyKind === 2 && tankStart < cutInAbs }
    const dy = new Array<number>(layout.size)
    const balance = (index: number, lo: number, hi: number) => {
      for (let i = 0; i < 100 && hi - lo > 1e-10 * hi; i++) {
        y[index] = 0.5 * (lo + hi)
        evaluate(0, y, mode, dy, true)
        if (dy[index]! > 0) lo = y[index]!
        else hi = y[index]!
      }
      y[index] = 0.5 * (lo + hi)
    }
    const u = y[omegaI]! * comp.tipRadiusM
    balance(intakeI, 0.2 * pAmb, pAmb * (1 + comp.headPerTipSpeed2 * u * u) ** (1 / comp.exponent))
    if (exhaustI >= 0) {
      for (let pass = 0; pass < 3; pass++) {
        balance(exhaustI, pAmb, 20 * pAmb)
        balance(intakeI, 0.2 * pAmb, pAmb * (1 + comp.headPerTipSpeed2 * u * u) ** (1 / comp.exponent))
      }
    }
    evaluate(0, y, mode, null, true)
    if (topI >= 0) y[topI] = out.topPa + pAmb
    if (bottomI >= 0) y[bottomI] = out.bottomPa + pAmb
    evaluate(0, y, mode, null)
    return { y, mode: { valve: out.netForceN <= 0 ? 'seated' : 'free', compressorOn: mode.compressorOn } }
  }

  const scale = (i: number) => {
    if (i === omegaI) return 1000 // rad/s
    if (i === liftI) return xMax // m
    if (i === velocityI) return xMax / 0.01 // m/s: full lift in 10 ms
    if (i === supplyI && supplyKind === 1) return 1e-3 // kg
    if (i === integralI) return 1e3 // Pa·s
    if (i === gasI) return 1e-3 // kg
    return 1e4 // Pa
  }
  const relative = s.solver.relativeTolerance
  const absoluteTolerance = Array.from({ length: layout.size }, (_, i) => relative * scale(i))

  return {
    layout,
    system,
    absoluteTolerance,
    chamberTreatment: { top: top.index >= 0 ? 'full' : 'quasi-static', bottom: bottom.index >= 0 ? 'full' : 'quasi-static' },
    outputs: (t, y, mode) => {
      evaluate(t, y, mode, null)
      return { ...out }
    },
    initialState,
    supplyChamberGasKg: (t, y, mode) => {
      evaluate(t, y, mode, null)
      let kg = 0
      for (const [ch, gauge] of [[top, out.topPa], [bottom, out.bottomPa]] as const) {
        if (!ch.drawsSupply) continue
        kg += ((gauge + pAmb) * (ch.volume0M3 + ch.volumePerLift * out.liftM)) / ch.RT
      }
      return kg
    },
  }
}
