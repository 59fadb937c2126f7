import { gasBudget, type PullResult, type Scenario } from '@crackpoint/sim-core'
import type { FieldQuantity } from './field-units'

export interface PullLine {
  key: string
  label: string
  value: string
}

export interface PullFlagWords {
  key: string
  tone: 'error' | 'warning' | 'info' | 'success'
  text: string
}

type Format = (quantity: FieldQuantity, si: number, digits?: number) => string

const OUTCOMES = {
  converged: null,
  'max-steps': 'The solver ran out of steps before the end of the pull; the figures cover the part it reached.',
  'too-many-events': 'The valve hit its stops so often that the pull was stopped as chattering; the figures cover the part it reached.',
} as const

/** How close a settled pull and the static balance at its lift count as matching: 0.05 psi (MODEL.md §4b). */
const SETTLED_MATCH_PA = 344.7

/** The metrics of one pull (MODEL.md §5) as lines a builder reads, in the user's units. */
export function pullLines(result: PullResult, scenario: Scenario, f: Format): PullLine[] {
  const m = result.metrics
  const p = (pa: number) => f('pressure', pa)
  const t = (s: number) => f('time', s)
  const lines: PullLine[] = [
    {
      key: 'crack',
      label: 'Cracks',
      value: m.openAtStart
        ? 'open from the start of the pull'
        : m.crackBoostPa !== null && m.crackTimeS !== null
          ? `at ${p(m.crackBoostPa)}, ${t(m.crackTimeS)} into the pull`
          : 'never in this pull',
    },
    { key: 'peak', label: 'Peak boost', value: p(m.peakBoostPa) },
    {
      key: 'settled',
      label: 'Settled boost',
      value: m.settledBoostPa === null ? 'no settled stretch' : `${p(m.settledBoostPa)}${result.flags.notSettled ? ' (still moving)' : ''}`,
    },
  ]
  if (m.staticBoostAtSettledLiftPa !== null) {
    // They meet once the chambers have caught up with their ports; a chamber still filling, or squeezed by a valve
    // creeping open as rpm rises, keeps the settled boost a little off (sim-core README, the random suite).
    const off = m.settledBoostPa === null ? 0 : m.settledBoostPa - m.staticBoostAtSettledLiftPa
    const gap = Math.abs(off) < SETTLED_MATCH_PA ? 'which the settled boost matches' : `${f('pressure', Math.abs(off), 2)} ${off > 0 ? 'below' : 'above'} the settled boost while the chambers catch up`
    lines.push({ key: 'static', label: 'Static balance at that lift', value: `${p(m.staticBoostAtSettledLiftPa)}, ${gap}` })
  }
  if (m.overshootPa !== null) lines.push({ key: 'overshoot', label: 'Overshoot', value: p(m.overshootPa) })
  if (m.timeTo90PercentS !== null) lines.push({ key: 't90', label: 'Time to 90 % of settled boost', value: t(m.timeTo90PercentS) })
  lines.push({ key: 'creep', label: 'Creep at full lift', value: m.creepPa === null ? 'none: the valve never reached full lift' : p(m.creepPa) })
  lines.push({
    key: 'drive',
    label: 'Peak drive pressure',
    value: `${p(m.peakDrivePa)}${m.driveRatioSeen === null ? '' : `, ${f('ratio', m.driveRatioSeen)} times boost`}`,
  })
  lines.push({ key: 'lift', label: 'Largest lift', value: `${f('percent', m.maxLiftFraction, 0)} of full lift` })
  if (m.gasUsedPerPullKg !== null) {
    // A pull can draw well under a gram from a bottle; three figures keep it from reading as nothing.
    lines.push({ key: 'gas', label: 'Gas per pull', value: f('gasMass', m.gasUsedPerPullKg, gasDigits(m.gasUsedPerPullKg)) })
  }
  if (m.pullsPerSupply !== null) {
    lines.push({
      key: 'pulls',
      // Pulls alone: what the system passes while armed between them is in the session line below.
      label: scenario.supply.kind === 'co2' ? 'Pulls per bottle, pulls alone' : 'Back-to-back pulls',
      value: `about ${Math.floor(m.pullsPerSupply).toLocaleString('en')}`,
    })
  }
  lines.push(...budgetLines(result, scenario, f))
  if (m.compressorDuty !== null) lines.push({ key: 'compressor', label: 'Compressor running', value: `${f('percent', m.compressorDuty, 0)} of the pull` })
  if (m.tankStartPa !== null && m.tankEndPa !== null && m.tankMinPa !== null) {
    lines.push({ key: 'tank', label: 'Tank', value: `${p(m.tankStartPa)} at the start, ${p(m.tankMinPa)} at its lowest, ${p(m.tankEndPa)} at the end` })
  }
  return lines
}

/** Grams to three figures: a pull can draw well under a gram, and a day kilograms. */
function gasDigits(kg: number): number {
  const grams = kg * 1000
  return grams >= 100 ? 0 : Math.max(0, 2 - Math.floor(Math.log10(Math.max(grams, 1e-6))))
}

/** Where a regulated supply's gas goes over a session (sim-core's gasBudget), beside the pull's own figures. */
function budgetLines(result: PullResult, scenario: Scenario, f: Format): PullLine[] {
  const budget = gasBudget(scenario, result)
  if (budget === null) return []
  const g = (kg: number) => f('gasMass', kg, gasDigits(kg))
  const gates = scenario.wastegate.count === 1 ? '' : `, all ${scenario.wastegate.count} gates`
  const lines: PullLine[] = [{ key: 'held', label: 'Lines and chambers hold', value: `${g(budget.heldKg)} at the setpoint${gates}` }]
  if (budget.armedKgPerS > 0) {
    lines.push({ key: 'armed', label: 'Armed between pulls', value: `${g(budget.armedKgPerS * 60)} a minute pass the solenoid to its vent${gates}` })
  }
  const { plan, kg, shareOfBottle, emptiesBottle } = budget.session
  const share =
    shareOfBottle === null ? '' : emptiesBottle ? ': more than a full bottle' : `, ${f('percent', shareOfBottle, shareOfBottle < 0.01 ? 1 : 0)} of a full bottle`
  const armed = plan.armedS % 60 === 0 ? `${plan.armedS / 60} min` : f('time', plan.armedS)
  const vented = plan.ventAfterEachPull ? ', lines vented after each pull' : ''
  lines.push({ key: 'session', label: `A session of ${plan.pulls} pulls, ${armed} armed${vented}`, value: `${g(kg)}${share}` })
  if (budget.tankRecoveryS !== null && Number.isFinite(budget.tankRecoveryS)) {
    lines.push({ key: 'recovery', label: 'Compressor wins a pull back in', value: f('time', budget.tankRecoveryS) })
  }
  return lines
}

/** The flags of a pull in plain words, worst first; a clean pull says so. */
export function pullFlags(result: PullResult, f: Format): PullFlagWords[] {
  const flags = result.flags
  const words: PullFlagWords[] = []
  const outcome = OUTCOMES[result.stats.outcome]
  if (outcome) words.push({ key: 'outcome', tone: 'error', text: outcome })
  if (flags.neverOpened) words.push({ key: 'never', tone: 'error', text: 'Boost never opened the valve in this pull.' })
  if (flags.overBoostLimit) {
    words.push({ key: 'limit', tone: 'error', text: `Boost went past the boost limit, to ${f('pressure', result.metrics.peakBoostPa)}.` })
  }
  if (flags.heldOpenByDrive) {
    words.push({
      key: 'held',
      tone: 'warning',
      text: 'Drive pressure alone held the valve open before boost reached its target: the spring is weak for this drive pressure.',
    })
  }
  if (flags.pastZeroFlowLine) words.push({ key: 'surge', tone: 'warning', text: "Boost reached the compressor's zero-flow line: a surge risk." })
  if (flags.supplyBelowSetpoint) {
    words.push({ key: 'supply', tone: 'warning', text: 'The supply fell below the regulator setpoint during the pull.' })
  }
  if (flags.notSettled) words.push({ key: 'settle', tone: 'info', text: 'Boost or lift was still moving at the end; the settled figures are rough.' })
  if (flags.supplyKeepsUp) words.push({ key: 'keeps-up', tone: 'success', text: 'The compressor keeps up with what the pulls draw.' })
  if (words.length === 0) words.push({ key: 'clean', tone: 'success', text: 'Nothing to flag in this pull.' })
  return words
}
