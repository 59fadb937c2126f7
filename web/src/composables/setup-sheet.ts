import { boostAtLift, computeBalance, type BalanceResult, type BoostOutcome, type Scenario } from '@crackpoint/sim-core'
import { outcomeWords } from './boost-outcome'
import type { FieldQuantity } from './field-units'
import { arrangementTitle, gasOnTopPort, portFeeds, SUPPLY_TITLES, topPortOnSupply, type PortFeed } from './port-arrangements'

export interface SheetLine {
  label: string
  value: string
}

export interface SheetRatioRow {
  ratio: string
  crack: string
  fullOpen: string
  /** The scenario's own ratio. */
  own: boolean
}

export interface SetupSheet {
  gate: SheetLine[]
  springs: SheetLine[]
  ports: SheetLine[]
  supply: SheetLine[]
  exhaust: SheetLine[]
  /** The boost the scenario was set up for (a target solve's answer put in); empty when none was. */
  goal: SheetLine[]
  crack: string
  fullOpen: string
  limit: string | null
  ratioRows: SheetRatioRow[]
  /** Warnings particular to this setup, in the order a reader should see them. */
  warnings: string[]
  /** A bottle or tank feeds the top port: the compressed-gas caution applies. */
  gas: boolean
  balance: BalanceResult
}

type Format = (quantity: FieldQuantity, si: number) => string

const FEED_WORDS: Readonly<Record<PortFeed, string>> = {
  air: 'open to the air',
  boost: 'boost from the intake manifold',
  supply: 'the supply',
  bleed: 'a bleed from boost',
  'solenoid-boost': 'boost through the solenoid',
  'solenoid-supply': 'the supply, switched by the solenoid',
}

/** A supply feed named by what it is: "the CO₂ bottle through the regulator" rather than "the supply". */
function feedWords(s: Scenario, feed: PortFeed): string {
  if (feed !== 'supply' && feed !== 'solenoid-supply') return FEED_WORDS[feed]
  const source = s.supply.kind === 'co2' ? 'the CO₂ bottle through its regulator' : s.supply.kind === 'compressor' ? 'the air tank through its regulator' : 'boost'
  return feed === 'supply' ? source : `${source}, switched by the solenoid`
}

const DOWNSTREAM_WORDS = { vented: 'Vented to the air', restricted: 'Restricted dump', recirculated: 'Recirculated after the turbine' } as const

/** Ratios of the sheet's table: every 0.1 from 1.0 to 2.0, a row for each, to fit one page. */
const SHEET_RATIO_STEP = 0.1

function controlLines(s: Scenario, f: Format): SheetLine[] {
  const c = s.control
  const percent = (v: number) => f('percent', v)
  switch (c.kind) {
    case 'bleed-top':
      return [{ label: 'Bleed to the top', value: `${percent(c.fraction)} of boost` }]
    case 'solenoid-3port':
      return [
        { label: 'Solenoid', value: `three-port on the ${c.chamber} chamber, ${percent(c.duty)} duty` },
        { label: 'Solenoid bore', value: f('smallLength', c.solenoidDiameterM) },
      ]
    case 'solenoid-4port':
      return [
        { label: 'Solenoid', value: `four-port, ${percent(c.duty)} duty` },
        { label: 'Solenoid bore', value: f('smallLength', c.solenoidDiameterM) },
      ]
    case 'closed-loop':
      return [
        { label: 'Boost target', value: f('pressure', c.targetBoostPa) },
        { label: 'Duty range', value: `${percent(c.dutyMin)} to ${percent(c.dutyMax)}` },
        {
          label: 'Gains P / I / D',
          value: `${f('gainP', c.proportionalPerPa)} / ${f('gainI', c.integralPerPaS)} / ${f('gainD', c.derivativeSPerPa)}`,
        },
      ]
    default:
      return []
  }
}

function lineWords(end: 'top' | 'bottom', line: Scenario['plumbing']['top'], f: Format): SheetLine {
  const restrictor = line.restrictorDiameterM === undefined ? '' : `, restrictor ${f('smallLength', line.restrictorDiameterM)}`
  return { label: end === 'top' ? 'Top line' : 'Bottom line', value: `${f('smallLength', line.boreM)} bore, ${f('length', line.lengthM)}${restrictor}` }
}

function supplyLines(s: Scenario, b: BalanceResult, f: Format): SheetLine[] {
  if (!topPortOnSupply(s)) return [{ label: 'Supply', value: 'Not used: nothing feeds the top port from a supply' }]
  const supply = s.supply
  const lines: SheetLine[] = [{ label: 'Supply', value: SUPPLY_TITLES[supply.kind] }]
  if (supply.kind === 'boost') return lines
  lines.push({ label: 'Regulator setpoint', value: f('pressure', supply.regulatorSetpointPa) })
  lines.push({ label: 'Regulator droop', value: f('pressure', supply.regulatorDroopPa) })
  if (supply.kind === 'co2') {
    lines.push({ label: 'Bottle', value: `${f('volume', supply.bottleVolumeM3)}, filled with ${f('mass', supply.fillMassKg)}` })
    const source = b.supply?.sourcePa
    lines.push({
      label: 'Bottle pressure',
      value: `${source === null || source === undefined ? 'not known for this fill' : f('pressure', source)} at ${f('temperature', supply.bottleTemperatureK)}`,
    })
  } else {
    lines.push({ label: 'Tank', value: f('volume', supply.tankVolumeM3) })
    lines.push({ label: 'Compressor runs', value: `from ${f('pressure', supply.cutInPa)} to ${f('pressure', supply.cutOutPa)}` })
    lines.push({ label: 'Rated flow', value: f('volumeFlow', supply.ratedFlowM3PerS) })
  }
  if (b.supply) lines.push({ label: 'Top port gets', value: f('pressure', b.supply.deliveredPa) })
  return lines
}

function springLines(s: Scenario, b: BalanceResult, f: Format): SheetLine[] {
  const lines = s.springs.map((spring, i) => {
    const label = s.springs.length === 1 ? 'Spring' : i === 0 ? 'Spring 1 (outer)' : `Spring ${i + 1} (nested)`
    const seat =
      spring.from === 'seat'
        ? `${f('force', spring.seatForceN)} seat`
        : `bench crack ${f('pressure', spring.benchCrackPressurePa)} (${f('force', spring.benchCrackPressurePa * b.areas.bottomM2)} seat)`
    return { label, value: `${seat}, ${f('springRate', spring.rateNPerM)}` }
  })
  if (s.springs.length > 1) {
    lines.push({ label: 'Together', value: `${f('force', b.seatForceN)} seat, ${f('springRate', b.rateNPerM)}` })
  }
  return lines
}

/** Everything the one-page setup sheet says about a saved scenario, worded in the reader's units. */
const GOAL_BOOST = { crack: 'crack boost', 'full-open': 'full-open boost', settled: 'settled boost in a pull' } as const
const GOAL_UNKNOWN = { 'seat-force': 'the spring seat force', setpoint: 'the regulator setpoint', 'bleed-fraction': 'the bleed fraction', duty: 'the solenoid duty' } as const

/** What the scenario was set up for, and, for a static target, the boost its settings give at each end of the band. */
function goalLines(s: Scenario, f: Format): SheetLine[] {
  const g = s.goal
  if (!g) return []
  const band = g.ratioLow === g.ratioHigh ? `at ${f('ratio', g.ratioLow)} : 1` : `over ${f('ratio', g.ratioLow)}–${f('ratio', g.ratioHigh)} : 1`
  const lines: SheetLine[] = [
    { label: 'Set up for', value: `${f('pressure', g.targetBoostPa)} of ${GOAL_BOOST[g.target]}, ${band}` },
    { label: 'Chosen by solving for', value: GOAL_UNKNOWN[g.unknown] },
  ]
  if (g.target !== 'settled') {
    const lift = g.target === 'crack' ? 0 : s.wastegate.maxLiftM
    const at = (ratio: number) => {
      const o = boostAtLift(s, lift, { ratio })
      return o.status === 'opens' ? f('pressure', o.boostPa) : o.status === 'never-opens' ? 'never opens' : 'open at zero boost'
    }
    lines.push({ label: 'Those settings give', value: g.ratioLow === g.ratioHigh ? at(g.ratioLow) : `${at(g.ratioLow)} to ${at(g.ratioHigh)}` })
  }
  return lines
}

export function setupSheet(s: Scenario, format: Format): SetupSheet {
  const b = computeBalance(s)
  const f = format
  const w = s.wastegate
  const pressure = (pa: number) => f('pressure', pa)
  const feeds = portFeeds(s)

  const gate: SheetLine[] = [
    { label: 'Wastegates', value: w.count === 1 ? 'one' : `${w.count}, identical` },
    { label: 'Valve / shaft', value: `Ø ${f('length', w.valveDiameterM)} / Ø ${f('length', w.shaftDiameterM)}` },
    { label: 'Actuator', value: `${w.actuatorKind}, Ø ${f('length', w.actuatorDiameterM)}` },
    { label: 'Full lift', value: f('length', w.maxLiftM) },
    { label: 'Valve face / back', value: `${f('area', b.areas.valveM2)} / ${f('area', b.areas.valveBackM2)}` },
    { label: 'Top / bottom chamber', value: `${f('area', b.areas.topM2)} / ${f('area', b.areas.bottomM2)}` },
  ]

  const ports: SheetLine[] = [
    { label: 'Arrangement', value: arrangementTitle(s.control.kind) },
    { label: 'Top port', value: feedWords(s, feeds.top) },
    { label: 'Bottom port', value: feedWords(s, feeds.bottom) },
    ...controlLines(s, f),
    ...(s.control.kind === 'none' ? [] : (['top', 'bottom'] as const).map((end) => lineWords(end, s.plumbing[end], f))),
  ]

  const d = s.exhaust.downstream
  const exhaust: SheetLine[] = [
    { label: 'Drive-to-boost ratio', value: `${f('ratio', s.exhaust.ratio)} : 1` },
    { label: 'Behind the valve', value: d.kind === 'restricted' ? `${DOWNSTREAM_WORDS[d.kind]}, ${f('restriction', d.coefficientPaPerKg2S2)}` : DOWNSTREAM_WORDS[d.kind] },
  ]
  if (s.exhaust.driveAtZeroBoostPa > 0) exhaust.push({ label: 'Drive at zero boost', value: pressure(s.exhaust.driveAtZeroBoostPa) })

  const cell = (o: BoostOutcome) => outcomeWords(o, pressure).headline
  const ratioRows = b.ratioSweep
    .filter((p) => Math.abs(p.ratio / SHEET_RATIO_STEP - Math.round(p.ratio / SHEET_RATIO_STEP)) < 1e-6)
    .map((p) => ({ ratio: `${p.ratio.toFixed(1)} : 1`, crack: cell(p.crack), fullOpen: cell(p.fullOpen), own: Math.abs(p.ratio - s.exhaust.ratio) < 1e-9 }))

  const warnings: string[] = []
  const crack = outcomeWords(b.crack, pressure)
  if (crack.detail) warnings.push(crack.detail)
  if (b.overLimit) warnings.push('The spring cracks above the boost limit set for this car.')
  else if (s.boostLimitPa !== undefined && b.fullOpen.status === 'opens' && b.fullOpen.boostPa > s.boostLimitPa) {
    warnings.push('Full open is above the boost limit: if the gate needs its full lift, boost passes the limit first.')
  }
  if (b.supply?.belowSetpoint) warnings.push('The supply cannot hold the regulator setpoint: the top port gets less than it asks for.')
  if (b.supply?.warning) warnings.push(`${b.supply.warning.charAt(0).toUpperCase()}${b.supply.warning.slice(1)}`)

  return {
    gate,
    goal: goalLines(s, f),
    springs: springLines(s, b, f),
    ports,
    supply: supplyLines(s, b, f),
    exhaust,
    crack: crack.headline,
    fullOpen: outcomeWords(b.fullOpen, pressure).headline,
    limit: s.boostLimitPa === undefined ? null : pressure(s.boostLimitPa),
    ratioRows,
    warnings,
    gas: gasOnTopPort(s),
    balance: b,
  }
}
