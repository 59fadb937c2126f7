import { co2BottleState } from '../co2.ts'
import { AIR } from '../gas.ts'
import { compressorConstants } from '../compressor.ts'
import { fourStrokeAirFlowKgS, interpolateTable } from '../engine.ts'
import { STANDARD_AIR } from '../units.ts'
import type { Scenario } from '../scenario.ts'
import { integrateHybrid, type IntegratorChoice } from './hybrid-integrator.ts'
import { pullMetrics, type PullRecord, type SupplyFigures } from './pull-metrics.ts'
import { buildPullModel, type ChamberTreatment, type PullMode } from './pull-model.ts'
import { pullNotes } from './pull-notes.ts'
import type { PullResult, PullSeries } from './pull-result.ts'
import { backToBackPulls, co2PullsPerBottle } from './supply-endurance.ts'

export interface RunPullOptions {
  /** odex (the default) or a fixed-step RK4 for comparison runs. */
  integrator?: IntegratorChoice
  /** Chamber treatment; 'auto' applies the stiffness rule of MODEL.md §4a. */
  chambers?: ChamberTreatment
  /** Overrides `scenario.solver.relativeTolerance`. */
  relativeTolerance?: number
  /**
   * How the actuator's chambers start: 'settled' (the default) at their steady pressures, as after cruising with the
   * system armed; 'vented' at ambient, as when the supply reaches the ports only as the throttle opens (a system armed
   * at wide-open throttle). Quasi-static chambers are at their steady pressure either way.
   */
  startChambers?: 'settled' | 'vented'
}

/**
 * Where a pull starts (MODEL.md §4b): the throttle has just opened at the start rpm, the manifold is at ambient,
 * and the shaft turns at the speed where the compressor, at zero boost, delivers just what the engine draws — a
 * state defined by the engine and the compressor alone, with no guessed starting speed. From there the engine's own
 * exhaust flow, forced through the turbine (the drive pressure it needs, pull-model.ts), spools the shaft.
 */
export const START_FLOW_MARGIN = 1

/** The starting shaft speed of a pull: `turbo.initialSpeedRadS` when given, else where the compressor just feeds the engine. */
export function initialShaftSpeedRadS(s: Scenario): number {
  if (s.turbo.initialSpeedRadS !== undefined) return Math.max(s.turbo.initialSpeedRadS, s.turbo.idleSpeedRadS)
  const e = s.engine
  const ve = e.volumetricEfficiencyByRpm
    ? interpolateTable(e.volumetricEfficiencyByRpm.map((p) => p.rpm), e.volumetricEfficiencyByRpm.map((p) => p.volumetricEfficiency), e.rpmStart)
    : e.volumetricEfficiency
  const chargeK = e.intercoolerEffectiveness === undefined ? e.chargeTemperatureK : s.ambient.temperatureK
  const engineKgS = fourStrokeAirFlowKgS(ve, s.ambient.pressurePa, chargeK, e.displacementM3, e.rpmStart)
  const c = compressorConstants(s.turbo, s.ambient)
  return Math.max((START_FLOW_MARGIN * engineKgS) / (c.flowPerTipSpeed * c.tipRadiusM), s.turbo.idleSpeedRadS)
}

const RATIO_MODE_NOTE =
  'Ratio mode: drive pressure is set by the drive-to-boost ratio, so the boost a closed wastegate would reach ' +
  'depends only on that ratio and on (1 + 1/AFR)·c_pe·T_em·η_t·η_c/(c_pa·T_amb), not on rpm or compressor size ' +
  '(those set the spool time). Use turbine mode to predict creep and closed-wastegate boost.'
const BOOST_CAUTION =
  'Boost and hot exhaust parts can hurt people and engines: stay within the engine and wastegate makers’ limits.'
const GAS_CAUTION =
  'High-pressure gas: use bottles, tanks and regulators rated for the pressure, and follow their makers’ instructions and local codes.'

/** One wide-open-throttle pull of a scenario (MODEL.md §4), with the metrics and flags of §5. */
export function runPull(s: Scenario, options: RunPullOptions = {}): PullResult {
  const integrator = options.integrator ?? { kind: 'odex' }
  if (integrator.kind !== 'odex' && integrator.kind !== 'rk4') {
    throw new RangeError(`options.integrator.kind must be "odex" or "rk4", not ${String((integrator as { kind: unknown }).kind)}`)
  }
  const rtol = options.relativeTolerance ?? s.solver.relativeTolerance
  if (!(rtol > 0 && rtol < 1)) throw new RangeError(`options.relativeTolerance must be between 0 and 1, not ${rtol}`)
  const scenario = rtol === s.solver.relativeTolerance ? s : { ...s, solver: { ...s.solver, relativeTolerance: rtol } }
  const model = buildPullModel(scenario, options.chambers === undefined ? {} : { chambers: options.chambers })
  const startChambers = options.startChambers ?? 'settled'
  if (startChambers !== 'settled' && startChambers !== 'vented') {
    throw new RangeError(`options.startChambers must be "settled" or "vented", not ${String(startChambers)}`)
  }
  const start = model.initialState(initialShaftSpeedRadS(s), startChambers === 'vented')
  const duration = s.engine.pullDurationS

  const series: PullSeries = {
    timeS: [], rpm: [], boostPa: [], drivePa: [], liftM: [], shaftSpeedRadS: [], topPa: [], bottomPa: [],
    supplyPa: [], regulatedPa: [], duty: [],
  }
  const record: PullRecord = {
    series,
    zeroFlowMargin: [],
    downstreamPa: [],
    targetBoostPa: [],
    atFullLift: [],
    crack: null,
    openAtStart: false,
    gasUsedKg: null,
    compressorOnS: s.supply.kind === 'compressor' ? 0 : null,
    durationS: duration,
  }
  let compressorSince = start.mode.compressorOn ? 0 : -1

  const result = integrateHybrid<PullMode>(model.system, {
    startS: 0,
    endS: duration,
    y0: start.y,
    mode0: start.mode,
    sampleIntervalS: s.solver.sampleIntervalS,
    relativeTolerance: rtol,
    absoluteTolerance: model.absoluteTolerance,
    maxStepS: s.solver.maxStepS,
    maxSteps: s.solver.maxSteps,
    maxRestarts: s.solver.maxEvents,
    integrator,
    onSample: (t, y, mode) => {
      const o = model.outputs(t, y, mode)
      series.timeS.push(t)
      series.rpm.push(o.rpm)
      series.boostPa.push(o.boostPa)
      series.drivePa.push(o.drivePa)
      series.liftM.push(o.liftM)
      series.shaftSpeedRadS.push(o.shaftSpeedRadS)
      series.topPa.push(o.topPa)
      series.bottomPa.push(o.bottomPa)
      series.supplyPa.push(o.supplySourcePa)
      series.regulatedPa.push(o.supplyDeliveredPa)
      series.duty.push(o.duty)
      record.zeroFlowMargin.push(o.zeroFlowMargin)
      record.downstreamPa.push(o.downstreamPa)
      record.targetBoostPa.push(o.targetBoostPa)
      record.atFullLift.push(mode.valve === 'full')
    },
    onWatch: (_index, t, y, mode) => {
      if (record.crack === null) record.crack = { timeS: t, boostPa: model.outputs(t, y, mode).boostPa }
    },
    onEvent: (t, _index, before, after) => {
      if (before.compressorOn === after.compressorOn || record.compressorOnS === null) return
      if (after.compressorOn) compressorSince = t
      else {
        record.compressorOnS += t - compressorSince
        compressorSince = -1
      }
    },
  })
  if (record.compressorOnS !== null && compressorSince >= 0) record.compressorOnS += result.reachedS - compressorSince
  record.openAtStart = start.mode.valve !== 'seated'
  if (model.layout.gasUsed >= 0) {
    // What the chambers on the supply lost over the pull is drawn again to refill them before the next one.
    const refill = model.supplyChamberGasKg(0, start.y, start.mode) - model.supplyChamberGasKg(result.reachedS, result.y, result.mode)
    record.gasUsedKg = result.y[model.layout.gasUsed]! + Math.max(0, refill)
  }

  const supply = supplyFigures(s, record, start.y, start.mode, model.layout.supply)
  const { metrics, flags } = pullMetrics(s, record, supply)
  const notes = [BOOST_CAUTION]
  if (s.exhaust.mode === 'ratio') notes.unshift(RATIO_MODE_NOTE)
  if (s.supply.kind !== 'boost') notes.push(GAS_CAUTION)
  const findings = pullNotes(s, series, metrics)
  notes.push(...findings.notes)
  flags.portLag = findings.portLag
  flags.targetUnreachable = findings.targetUnreachable
  if (s.supply.kind === 'co2') {
    const bottle = co2BottleState({ volumeM3: s.supply.bottleVolumeM3, massKg: s.supply.fillMassKg, temperatureK: s.supply.bottleTemperatureK })
    if (bottle.warning) notes.push(bottle.warning)
  }
  return {
    series,
    metrics,
    flags,
    stats: {
      outcome: result.stats.outcome,
      steps: result.stats.steps,
      rejected: result.stats.rejected,
      evaluations: result.stats.evaluations,
      auxiliaryEvaluations: result.stats.guardChecks + series.timeS.length,
      restarts: result.stats.restarts,
      smallestStepS: result.stats.smallestStepS,
      reachedS: result.reachedS,
      integrator: integrator.kind,
      chambers: model.chamberTreatment,
    },
    notes,
  }
}

function supplyFigures(s: Scenario, r: PullRecord, y0: readonly number[], mode0: PullMode, supplyIndex: number): SupplyFigures {
  const supply = s.supply
  if (supply.kind === 'boost') return { pullsPerSupply: null, keepsUp: false, holdPa: null }
  const holdPa = supply.regulatorSetpointPa + supply.regulatorDroopPa
  const pAmb = s.ambient.pressurePa
  const gas = r.gasUsedKg ?? 0
  if (supply.kind === 'co2') {
    const pulls = co2PullsPerBottle(
      { volumeM3: supply.bottleVolumeM3, fillMassKg: supply.fillMassKg, temperatureK: supply.bottleTemperatureK },
      pAmb + holdPa,
      gas,
    )
    return { pullsPerSupply: pulls, keepsUp: false, holdPa }
  }
  const cycle = backToBackPulls({
    startPa: y0[supplyIndex]!,
    compressorOn: mode0.compressorOn,
    pullDurationS: s.engine.pullDurationS,
    gasPerPullKg: gas,
    pressurePerKg: (AIR.gasConstant * s.ambient.temperatureK) / supply.tankVolumeM3,
    ratedKgS: (STANDARD_AIR.pressurePa / (AIR.gasConstant * STANDARD_AIR.temperatureK)) * supply.ratedFlowM3PerS,
    ambientPa: pAmb,
    maxPa: pAmb + supply.maxPressurePa,
    cutInPa: pAmb + supply.cutInPa,
    cutOutPa: pAmb + supply.cutOutPa,
    holdPa: pAmb + holdPa,
  })
  return { pullsPerSupply: cycle.pulls, keepsUp: cycle.keepsUp, holdPa }
}
