import type { PullFlags, PullResult } from '../pull/index.ts'
import type { Scenario } from '../scenario.ts'
import { formatQuantity, type Quantity, type UnitSystem } from '../units.ts'
import { CAUTION } from './describe.ts'
import { renderPairs, renderTable } from './table.ts'

/** What each raised flag means, in the words of MODEL.md §5. */
export const FLAG_TEXT: Record<keyof PullFlags, string> = {
  overBoostLimit: 'peak boost is over the boost limit',
  heldOpenByDrive: 'drive pressure alone held the valve open before boost reached its target',
  supplyBelowSetpoint: 'the supply fell below the regulator setpoint',
  pastZeroFlowLine: "boost reached the compressor's zero-flow line (surge risk)",
  neverOpened: 'boost never opened the valve',
  notSettled: 'not settled: boost or lift still scatter in the settling window',
  hunting: 'boost hunts: it swings more than 1 psi about its trend through two or more cycles',
  portLag: 'port lag: the chambers trailed their ports, so the gate cracked late',
  targetUnreachable: "the closed loop's target is outside what the gate holds between its duty limits",
  supplyKeepsUp: 'the compressor keeps up with the draw for good',
}

export function raisedFlags(flags: PullFlags): string[] {
  return (Object.keys(FLAG_TEXT) as (keyof PullFlags)[]).filter((k) => flags[k]).map((k) => FLAG_TEXT[k])
}

/** Rows of the series table: about every 0.25 s, and always the last sample. */
const SERIES_ROWS_PER_S = 4

/** One pull as the readable report of `sim pull`: metrics, raised flags, a coarse series, solver statistics. */
export function renderPull(title: string, s: Scenario, r: PullResult, system: UnitSystem): string {
  const q = (quantity: Quantity, v: number | null) => (v === null || !Number.isFinite(v) ? '—' : formatQuantity(quantity, system, v))
  const p = (v: number | null) => q('pressure', v)
  const m = r.metrics
  const metrics: [string, string][] = [
    ['crack boost', m.crackBoostPa === null ? 'never cracked' : `${p(m.crackBoostPa)} at ${q('time', m.crackTimeS)}`],
    ['peak boost', p(m.peakBoostPa)],
    ['settled boost', p(m.settledBoostPa)],
    ['static balance at the settled lift', p(m.staticBoostAtSettledLiftPa)],
    ['settled lift', q('smallLength', m.settledLiftM)],
    ['overshoot', p(m.overshootPa)],
    ['time to 90 % of settled boost', q('time', m.timeTo90PercentS)],
    ['creep (valve fully open)', m.creepPa === null ? '— (never at full lift)' : p(m.creepPa)],
    ['peak drive pressure', p(m.peakDrivePa)],
    ['drive-to-boost ratio seen', m.driveRatioSeen === null ? '—' : m.driveRatioSeen.toFixed(2)],
    ['largest lift', `${Math.round(m.maxLiftFraction * 100)} % of full lift`],
  ]
  if (s.supply.kind !== 'boost') {
    // Sealed chambers spend little gas: show hundredths of a gram below 10 g rather than "0 g".
    const gas = m.gasUsedPerPullKg
    metrics.push(['gas used this pull', gas === null ? '—' : formatQuantity('gasMass', system, gas, gas < 0.01 ? 2 : 0)])
    const per = s.supply.kind === 'co2' ? 'pulls per bottle' : 'back-to-back pulls holding the setpoint'
    metrics.push([per, m.pullsPerSupply === null ? (r.flags.supplyKeepsUp ? 'unlimited' : '—') : String(Math.floor(m.pullsPerSupply))])
  }
  if (s.supply.kind === 'compressor') {
    metrics.push(['compressor duty', m.compressorDuty === null ? '—' : `${Math.round(m.compressorDuty * 100)} %`])
    metrics.push(['tank start / end / lowest', [m.tankStartPa, m.tankEndPa, m.tankMinPa].map(p).join(' / ')])
  }
  const flags = raisedFlags(r.flags)
  const st = r.stats
  const solver: [string, string][] = [
    ['outcome', st.outcome === 'converged' ? 'converged' : `${st.outcome}: stopped at ${q('time', st.reachedS)}`],
    ['integrator', st.integrator],
    ['steps (rejected)', `${st.steps} (${st.rejected})`],
    ['evaluations (+ auxiliary)', `${st.evaluations} (+ ${st.auxiliaryEvaluations})`],
    ['restarts at events', String(st.restarts)],
    ['smallest step', `${st.smallestStepS.toExponential(2)} s`],
    ['chambers top / bottom', `${st.chambers.top} / ${st.chambers.bottom}`],
  ]
  const series = r.series
  const every = Math.max(1, Math.round(1 / (SERIES_ROWS_PER_S * s.solver.sampleIntervalS)))
  const picks = series.timeS.map((_, i) => i).filter((i) => i % every === 0 || i === series.timeS.length - 1)
  const num = (quantity: Quantity, v: number | undefined) => (v === undefined ? '—' : formatQuantity(quantity, system, v).split(' ')[0] ?? '')
  const unit = (quantity: Quantity) => formatQuantity(quantity, system, 0).split(' ')[1] ?? ''
  const seriesTable = renderTable(
    ['t (s)', 'rpm', `boost (${unit('pressure')})`, `drive (${unit('pressure')})`, `lift (${unit('smallLength')})`,
      'shaft (rpm)', `top (${unit('pressure')})`, `bottom (${unit('pressure')})`, `supply (${unit('pressure')})`],
    picks.map((i) => [
      (series.timeS[i] ?? 0).toFixed(2),
      String(Math.round(series.rpm[i] ?? 0)),
      num('pressure', series.boostPa[i]),
      num('pressure', series.drivePa[i]),
      num('smallLength', series.liftM[i]),
      num('speed', series.shaftSpeedRadS[i]),
      num('pressure', series.topPa[i]),
      num('pressure', series.bottomPa[i]),
      num('pressure', series.supplyPa[i]),
    ]),
  )
  return [
    `Pull (${s.exhaust.mode} mode): ${title}`,
    `${s.engine.rpmStart}–${s.engine.rpmEnd} rpm over ${s.engine.pullDurationS} s; pressures gauge, units ${system === 'us' ? 'US' : 'metric'}.`,
    '',
    'Metrics',
    renderPairs(metrics),
    '',
    'Flags',
    flags.length === 0 ? '  none' : flags.map((f) => `  • ${f}`).join('\n'),
    '',
    'Over the pull',
    seriesTable,
    '',
    'Solver',
    renderPairs(solver),
    '',
    ...r.notes.map((n) => `Note: ${n}`),
    CAUTION,
  ].join('\n')
}
