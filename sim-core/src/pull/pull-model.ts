import { co2BottlePressureFunction, co2BottlePressurePa } from '../co2.ts'
import { compressorConstants } from '../compressor.ts'
import { interpolateTable } from '../engine.ts'
import { AIR } from '../gas.ts'
import { dutyToCrackAt } from '../balance.ts'
import { bracketedRoot } from '../bracketed-root.ts'
import { chamberVolumes, springTotals, wastegateAreas } from '../geometry.ts'
import { flowFunctionFor, orificeFlowKgS, type FlowFunction } from '../orifice.ts'
import type { Scenario } from '../scenario.ts'
import { STANDARD_AIR } from '../units.ts'
import { steadyChamberPressurePa } from '../steady-chamber.ts'
import { chamberPlumbing, type DutyShare, type SourceKind } from './chamber-plumbing.ts'
import { chamberGas, exhaustGas } from './gases.ts'
import type { HybridSystem } from './hybrid-integrator.ts'
import { driveInterceptPa, impliedTurbine } from './implied-turbine.ts'

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
  /** The shaft's power balance: J·ω·dω/dt = turbine − compressor − friction, W. */
  turbinePowerW: number
  compressorPowerW: number
  frictionPowerW: number
}

/** Duty past a limit over which the closed loop's integral fades out (conditional integration, see evaluate). */
export const INTEGRAL_FADE_DUTY = 0.02

/**
 * The closed loop integrates only within this of its target (fading to nothing at the band's edge), Pa: 2 psi. Boost
 * controllers commonly hold the integral off until boost nears the target (common practice, no source).
 */
export const INTEGRAL_BAND_PA = 13_790

/** The stiffness, C_d·A·√(R·T)/V, above which a chamber is treated as quasi-static (MODEL.md §4a), 1/s. */
export const QUASI_STATIC_ABOVE_PER_S = 50

const SOURCE_CODE: Record<SourceKind, number> = { intake: 0, ambient: 1, supply: 2, bleed: 3 }
/** When a path is open: always, for the duty's share of the time (a switching valve's "on" path), or for the rest. */
const SHARE_CODE: Record<DutyShare, number> = { always: 0, on: 1, off: 2 }

interface ChamberModel {
  readonly name: 'top' | 'bottom'
  readonly index: number
  readonly sources: Int8Array
  readonly areas: Float64Array
  /** SHARE_CODE of each path. */
  readonly shares: Uint8Array
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
  /** The start of a pull; with `ventedChambers` the integrated chambers start at ambient instead of their steady pressure. */
  initialState(omega0: number, ventedChambers?: boolean): { y: number[]; mode: PullMode }
  /** Gas held in the chambers that the supply feeds, kg (p·V/(R·T) of each). */
  supplyChamberGasKg(t: number, y: readonly number[], mode: PullMode): number
}

const bad = (path: string, message: string) => new RangeError(`${path} ${message}`)

/**
 * Pressure of a CO₂ bottle as its contents are drawn, for the time step: the Span–Wagner bottle function of co2.ts
 * (saturation pressure while liquid remains, the equation of state once one phase fills the bottle), held at a
 * nanogram so that a bottle the pull has emptied reads as near-vacuum gas rather than an error.
 */
function bottlePressureFunction(volumeM3: number, temperatureK: number): (massKg: number) => number {
  const pressure = co2BottlePressureFunction(volumeM3, temperatureK)
  // A pull draws a gram or so from a kilogram bottle, a little at every evaluation: within a millionth of the mass
  // of the last exact evaluation the pressure is taken on its tangent there, which differs from the equation of
  // state by less than 1e-12 of the pressure and spares most evaluations of it (a supercritical bottle has no
  // saturation plateau to fall back on).
  let mRef = Number.NaN
  let pRef = 0
  let slope = 0
  return (massKg) => {
    const m = Math.max(massKg, 1e-9)
    const dm = m - mRef
    if (dm <= 1e-6 * mRef && dm >= -1e-6 * mRef) return pRef + slope * dm
    mRef = m
    pRef = pressure(m)
    // Backward: a bottle filled to the densest liquid has no room for a forward step.
    const h = 1e-7 * m
    slope = (pRef - pressure(m - h)) / h
    return pRef
  }
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
  // Chamber volumes with the valve shut, as entered or derived from the actuator (geometry.ts).
  const volumes = chamberVolumes(w, areas)
  // The schema refuses this; a scenario put together in code still gets a named error rather than a negative volume.
  if (volumes.topM3 <= areas.topM2 * xMax) {
    throw bad(
      'wastegate.topChamberVolumeM3',
      `must exceed the volume the piston sweeps at full lift (${((areas.topM2 * xMax) / 1e-6).toFixed(1)} cm³)`,
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
  // A drive-to-boost ratio measured over rpm (a back-pressure gauge's log), read in place of the single ratio.
  const ratioKeys = x.ratioByRpm?.map((p) => p.rpm) ?? null
  const ratioValues = x.ratioByRpm?.map((p) => p.ratio) ?? null
  const driveAtZeroPa = x.driveAtZeroBoostPa
  const backCoeff = x.backPressureCoefficientPaPerKg2S2
  const turbineArea = x.turbineAreaM2
  // The turbine that must pass the exhaust: in turbine mode the scenario's; in ratio mode the one the ratio implies at
  // the end of the pull (implied-turbine.ts), so that early in a pull, at low boost, the drive pressure is what the
  // engine's own exhaust flow needs rather than the ratio times a boost that is not there yet (MODEL.md §4b, start).
  const implied = turbineMode ? null : impliedTurbine(s)
  const floorTurbineArea = implied === null ? turbineArea : implied.areaM2
  const lineBoostPa = implied === null ? 0 : implied.lineBoostPa
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
          // Feed-forward: the duty that cracks the valve at the target (balance.ts), as a controller's base duty.
          base: dutyToCrackAt(s, c.targetBoostPa)!,
          baseValues: c.targetByRpm?.map((p) => dutyToCrackAt(s, p.boostPa)!) ?? null,
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
    const ports = plumbing[name]
    const conns = ports.connections
    const gas = chamberGas(s, conns)
    const sqrtRT = Math.sqrt(gas.gasConstant * tCh)
    // The line to the chamber (its hose) fills and empties with it.
    const volume0M3 = (name === 'top' ? volumes.topM3 : volumes.bottomM3) + ports.lineVolumeM3
    const volumePerLift = name === 'top' ? -areas.topM2 : areas.bottomM2
    const smallest = name === 'top' ? volume0M3 - areas.topM2 * xMax : volume0M3
    const stiffnessPerS = (conns.reduce((sum, k) => sum + k.dischargeAreaM2, 0) * sqrtRT) / smallest
    const quasi = treatment === 'quasi-static' || (treatment === 'auto' && stiffnessPerS > QUASI_STATIC_ABOVE_PER_S)
    return {
      name,
      sources: Int8Array.from(conns.map((k) => SOURCE_CODE[k.source])),
      areas: Float64Array.from(conns.map((k) => k.dischargeAreaM2)),
      shares: Uint8Array.from(conns.map((k) => SHARE_CODE[k.share])),
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

  /**
   * C_d·A of a chamber's path i as open at this duty (a switching valve's time share applied): chamber-plumbing's
   * openAreaM2 on the typed arrays the right-hand side keeps, so an evaluation reads no objects.
   */
  const openArea = (ch: ChamberModel, i: number, duty: number): number => {
    const share = ch.shares[i]!
    const a = ch.areas[i]!
    return share === 0 ? a : share === 1 ? a * duty : a * (1 - duty)
  }

  /** Net inflow into a chamber at pressure p (and the part drawn from the supply), into the scratch. */
  const chamberFlows = (ch: ChamberModel, p: number, duty: number) => {
    let sum = 0
    let draw = 0
    const n = ch.sources.length
    for (let i = 0; i < n; i++) {
      const m = orificeFlowKgS(openArea(ch, i, duty), src[ch.sources[i]!]!, p, ch.sqrtRT, ch.flow)
      sum += m
      // A relieving regulator vents what flows back: only what leaves the supply is spent.
      if (ch.sources[i] === 2 && m > 0) draw += m
    }
    chamberFlowIn = sum
    chamberDraw = draw
  }

  /** Quasi-static chamber pressure: the steady divider shared with the static level (steady-chamber.ts). */
  const pathAreas = new Float64Array(8)
  const pathSources = new Float64Array(8)
  const quasiStaticPressure = (ch: ChamberModel, duty: number, velocity: number): number => {
    const n = ch.sources.length
    let open = 0
    for (let i = 0; i < n; i++) {
      pathAreas[i] = openArea(ch, i, duty)
      pathSources[i] = src[ch.sources[i]!]!
      if (pathAreas[i]! > 0) open++
    }
    // The air cushion (gas the moving piston pushes through the ports) is kept where one path is open: there it grows
    // with the square of the speed, and stops a fast valve without slowing a slow one. Between two open paths it would
    // be a linear damper stiff enough (a time constant under a millisecond) to hold an explicit step to that size, and
    // the valve it damps follows its static balance anyway; there the divider alone gives the pressure.
    const displaced = open === 1 ? (ch.volumePerLift * velocity) / ch.RT : 0
    return steadyChamberPressurePa(pathAreas, pathSources, n, ch.sqrtRT, ch.flow, pAmb, displaced)
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

  /**
   * The drive pressure at which the turbine (effective area A_t) and the gate together pass `flowKgS` to the turbine
   * outlet `ptoPa` (the gate's far side taken at ambient, or at the turbine outlet when plumbed back). Most of a
   * pull the ratio's drive pressure already passes the flow, and one check of it is all this costs.
   */
  const passedAt = (pem: number, gateArea: number, pto: number): number =>
    (floorTurbineArea === Infinity ? Infinity : orificeFlowKgS(floorTurbineArea, pem, pto, sqrtRTe, flowE)) +
    (gateArea > 0 ? orificeFlowKgS(gateArea, pem, downstreamKind === 'recirculated' ? pto : pAmb, sqrtRTe, flowE) : 0)
  const driveToPass = (flowKgS: number, gateArea: number, ptoPa: number): number => {
    let lo = ptoPa
    let hi = lo * 1.05
    while (passedAt(hi, gateArea, ptoPa) < flowKgS) {
      lo = hi
      hi *= 1.5
      if (hi > 1e8) return hi
    }
    // Flow rises monotonically with the drive pressure: a bracketed root, to 1e-10 relative.
    const excess = (p: number) => passedAt(p, gateArea, ptoPa) - flowKgS
    return bracketedRoot(excess, lo, hi, excess(lo), excess(hi), 1e-10, 60)
  }

  const out: PullOutputs = {
    rpm: 0, boostPa: 0, drivePa: 0, turbineOutletPa: 0, downstreamPa: 0, topPa: 0, bottomPa: 0, supplySourcePa: 0,
    supplyDeliveredPa: 0, duty: 0, liftM: 0, shaftSpeedRadS: 0, netForceN: 0, compressorFlowKgS: 0, engineFlowKgS: 0,
    exhaustFlowKgS: 0, wastegateFlowKgS: 0, turbineFlowKgS: 0, zeroFlowMargin: 0, supplyDrawKgS: 0,
    compressorFlowToTankKgS: 0, targetBoostPa: 0, turbinePowerW: 0, compressorPowerW: 0, frictionPowerW: 0,
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
    let mwg = 0
    let mt = 0
    let dpem = 0
    if (!turbineMode) {
      const boost = pim - pAmb
      // §4a: drive pressure never below the turbine outlet (taken at the whole exhaust flow), so the shaft is never driven backwards.
      const r = ratioKeys === null ? ratio : interpolateTable(ratioKeys, ratioValues!, rpm)
      const floor = pAmb + backCoeff * mexh * mexh
      // The line's zero-boost pressure is spread over the boost below the crack (implied-turbine.ts).
      pem = pAmb + (boost > 0 ? r * boost + driveInterceptPa(driveAtZeroPa, lineBoostPa, boost) : 0)
      // §4b: nor below what the exhaust flow needs to pass the turbine the ratio implies and the open gate. At low
      // boost this, not the ratio, sets the drive pressure, so a pull spools from the engine's own exhaust flow.
      if (passedAt(pem, gateArea, floor) < mexh) pem = driveToPass(mexh, gateArea, floor)
      pdn = downstreamKind === 'vented' ? pAmb : downstreamKind === 'recirculated' ? floor : gateArea > 0 ? restrictedDownstream(gateArea, pem) : pAmb
      mwg = orificeFlowKgS(gateArea, pem, pdn, sqrtRTe, flowE)
      mt = mexh - mwg
      if (mt < 0) mt = 0
      pto = downstreamKind === 'recirculated' ? floor : pAmb + backCoeff * mt * mt
    } else {
      pem = y[exhaustI]!
      // p_to = p_amb + K_ex·ṁ², with ṁ the turbine flow (plus the gate's when it is plumbed back). The excess
      // g(p_to) = p_to − p_amb − K_ex·ṁ(p_to)² rises from g(p_amb) ≤ 0 to g(p_em) ≥ 0 (no flow once p_to reaches
      // p_em), so its root is bracketed: Illinois on [p_amb, p_em], which a fixed-point iteration is not for a
      // large K_ex and turbine.
      pdn = downstreamKind === 'restricted' && gateArea > 0 ? restrictedDownstream(gateArea, pem) : pAmb
      const recirculated = downstreamKind === 'recirculated'
      const excess = (p: number): number => {
        mt = orificeFlowKgS(turbineArea, pem, p, sqrtRTe, flowE)
        mwg = recirculated ? orificeFlowKgS(gateArea, pem, p, sqrtRTe, flowE) : mwg
        const through = recirculated ? mt + mwg : mt
        return p - pAmb - backCoeff * through * through
      }
      mwg = recirculated ? 0 : orificeFlowKgS(gateArea, pem, pdn, sqrtRTe, flowE)
      if (pem <= pAmb || backCoeff === 0) {
        pto = pAmb
        excess(pto)
      } else {
        const fLo = excess(pAmb)
        pto = fLo < 0 ? bracketedRoot(excess, pAmb, pem, fLo, pem - pAmb, 1e-12, 80) : pAmb
        // The flows at the answer, for what follows.
        excess(pto)
      }
      if (recirculated) pdn = pto
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
      const base = loop.targetKeys === null ? loop.base : interpolateTable(loop.targetKeys, loop.baseValues!, rpm)
      const raw = base + loop.kp * err + loop.ki * y[integralI]! - loop.kd * dpim
      duty = raw < loop.dutyMin ? loop.dutyMin : raw > loop.dutyMax ? loop.dutyMax : raw
      // Anti-windup by conditional integration: the integral stops while the command is past a duty limit. While the
      // turbo spools the solenoid sits at its limit with the error large for a second or more; back-calculation would
      // carry the integral to that limit by the time boost arrives (MODEL.md §4 Control). Fading over the last
      // INTEGRAL_FADE_DUTY keeps the right-hand side continuous, which the step-size control needs.
      const beyond = raw - duty
      const fade = 1 - (beyond < 0 ? -beyond : beyond) / INTEGRAL_FADE_DUTY
      // …and only near the target: with the base duty doing the bulk, the integral trims what the base misses, and
      // integrating the whole climb to the target would wind it up however the limits are handled.
      const magnitude = err < 0 ? -err : err
      const near = 1 - magnitude / INTEGRAL_BAND_PA
      dI = fade > 0 && near > 0 ? err * fade * near : 0
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
      pTop = quasiStaticPressure(top, duty, vel)
      chamberFlows(top, pTop, duty)
    }
    // Every gate has its own chambers and hoses at the same pressures: the supply feeds them all.
    if (top.drawsSupply) draw += gateCount * chamberDraw
    let pBot: number
    if (bottom.index >= 0 && !quasiStatic) {
      pBot = y[bottom.index]!
      chamberFlows(bottom, pBot, duty)
      if (dy) {
        const vol = bottom.volume0M3 + bottom.volumePerLift * liftPos
        dy[bottom.index] = (bottom.RT * chamberFlowIn - pBot * bottom.volumePerLift * vel) / vol
      }
    } else {
      pBot = quasiStaticPressure(bottom, duty, vel)
      chamberFlows(bottom, pBot, duty)
    }
    if (bottom.drawsSupply) draw += gateCount * chamberDraw

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
    out.turbinePowerW = pt
    out.compressorPowerW = pc
    out.frictionPowerW = friction * omega * omega
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
  const initialState = (omega0: number, ventedChambers = false): { y: number[]; mode: PullMode } => {
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
    if (topI >= 0 && !ventedChambers) y[topI] = out.topPa + pAmb
    if (bottomI >= 0 && !ventedChambers) y[bottomI] = out.bottomPa + pAmb
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
      // The same in every gate.
      return kg * gateCount
    },
  }
}
