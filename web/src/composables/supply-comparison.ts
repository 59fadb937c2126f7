import { parseScenario, supplySchema, toFieldIssues, type PullMetrics, type Scenario } from '@crackpoint/sim-core'

/** The bottle's figures the comparison lets the user change (SI). */
export interface BottleInputs {
  bottleVolumeM3: number
  fillMassKg: number
  bottleTemperatureK: number
}

/** The compressor's and tank's figures the comparison lets the user change (SI, gauge pressures). */
export interface TankInputs {
  tankVolumeM3: number
  cutInPa: number
  cutOutPa: number
  ratedFlowM3PerS: number
  maxPressurePa: number
}

const CO2_DEFAULTS = supplySchema.parse({ kind: 'co2', regulatorSetpointPa: 0 })
const TANK_DEFAULTS = supplySchema.parse({ kind: 'compressor', regulatorSetpointPa: 0 })

/** sim-core's own starting bottle (about a 5 lb bottle) and tank (2.5 gal, 120–150 psi, about 1 scfm). */
export function defaultBottle(): BottleInputs {
  if (CO2_DEFAULTS.kind !== 'co2') throw new Error('unreachable')
  return { bottleVolumeM3: CO2_DEFAULTS.bottleVolumeM3, fillMassKg: CO2_DEFAULTS.fillMassKg, bottleTemperatureK: CO2_DEFAULTS.bottleTemperatureK }
}
export function defaultTank(): TankInputs {
  if (TANK_DEFAULTS.kind !== 'compressor') throw new Error('unreachable')
  const { tankVolumeM3, cutInPa, cutOutPa, ratedFlowM3PerS, maxPressurePa } = TANK_DEFAULTS
  return { tankVolumeM3, cutInPa, cutOutPa, ratedFlowM3PerS, maxPressurePa }
}

/** 10 psi (68 948 Pa) when the scenario has no regulator of its own: a starting value to edit (common practice, no source). */
export const SETPOINT_START_PA = 68_948

/** The scenario's own regulator setpoint, when its supply has one. */
export function scenarioSetpoint(scenario: Scenario): number {
  return scenario.supply.kind === 'boost' ? SETPOINT_START_PA : scenario.supply.regulatorSetpointPa
}

/**
 * Arrangements whose top port already takes the supply keep it; the others are given one, so there is a
 * supply to compare: the bottom port stays on boost where it was (`both`), an open gate takes `top-supply`.
 */
function withSuppliedTop(control: Scenario['control']): { control: Scenario['control']; changed: string | null } {
  switch (control.kind) {
    case 'top-supply':
    case 'both':
    case 'solenoid-4port':
    case 'closed-loop':
      return { control, changed: null }
    case 'solenoid-3port':
      return control.chamber === 'top'
        ? { control, changed: null }
        : { control: { kind: 'both' }, changed: 'Its solenoid works on the bottom chamber, so the comparison puts boost on the bottom port and the supply on the top.' }
    case 'none':
      return { control: { kind: 'top-supply' }, changed: 'Its ports are open to the air, so the comparison puts the supply on the top port.' }
    default:
      return { control: { kind: 'both' }, changed: 'Its top port takes no supply, so the comparison keeps the bottom port on boost and puts the supply on the top.' }
  }
}

export interface SupplyVariants {
  co2: { ok: true; scenario: Scenario } | { ok: false; issues: Record<string, string> }
  compressor: { ok: true; scenario: Scenario } | { ok: false; issues: Record<string, string> }
  /** Said when the scenario's own arrangement had to change to feed the top port. */
  arrangementNote: string | null
}

function variant(base: Scenario, control: Scenario['control'], supply: unknown) {
  const checked = supplySchema.safeParse(supply)
  if (!checked.success) {
    const issues: Record<string, string> = {}
    for (const issue of toFieldIssues(checked.error)) issues[issue.path] ??= issue.message
    return { ok: false as const, issues }
  }
  const parsed = parseScenario({ ...base, control, supply: checked.data })
  if (parsed.ok) return { ok: true as const, scenario: parsed.scenario }
  return { ok: false as const, issues: Object.fromEntries(parsed.issues.map((i) => [i.path.replace(/^supply\./, ''), i.message])) }
}

/** The scenario twice, the top port on a CO₂ bottle and on a compressor with tank, at the same regulator setpoint. */
export function supplyVariants(base: Scenario, setpointPa: number, bottle: BottleInputs, tank: TankInputs): SupplyVariants {
  const { control, changed } = withSuppliedTop(base.control)
  const droop = base.supply.kind === 'boost' ? undefined : base.supply.regulatorDroopPa
  const regulator = { regulatorSetpointPa: setpointPa, ...(droop === undefined ? {} : { regulatorDroopPa: droop }) }
  return {
    co2: variant(base, control, { kind: 'co2', ...regulator, ...bottle }),
    compressor: variant(base, control, { kind: 'compressor', ...regulator, ...tank }),
    arrangementNote: changed,
  }
}

/**
 * Seconds the compressor needs to bring the tank back from where the pull left it to where it started, running
 * all the while. Its delivery falls linearly from the rated free-air flow at 0 gauge to nothing at the top
 * pressure (sim-core's model, MODEL.md §4), and the tank fills isothermally, so
 * dp/dt = Q₀·p_amb/V · (1 − p/p_max) and t = V·p_max/(Q₀·p_amb) · ln((p_max − p_end)/(p_max − p_start)).
 * Null without a tank or when nothing was drawn; Infinity when the start is at or above the top pressure.
 */
export function tankRecoveryS(scenario: Scenario, metrics: PullMetrics): number | null {
  const s = scenario.supply
  if (s.kind !== 'compressor' || metrics.tankStartPa === null || metrics.tankEndPa === null) return null
  if (metrics.tankEndPa >= metrics.tankStartPa) return 0
  if (metrics.tankStartPa >= s.maxPressurePa) return Number.POSITIVE_INFINITY
  const scale = (s.tankVolumeM3 * s.maxPressurePa) / (s.ratedFlowM3PerS * scenario.ambient.pressurePa)
  return scale * Math.log((s.maxPressurePa - metrics.tankEndPa) / (s.maxPressurePa - metrics.tankStartPa))
}
