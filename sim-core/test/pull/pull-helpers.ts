import { defaultScenario, fromSI, parseScenario, toSI, units, type Scenario } from '../../src/index.ts'

export const psi = (v: number) => toSI(units.psi, v)
export const toPsi = (pa: number) => fromSI(units.psi, pa)

type Patch = { [K in keyof Scenario]?: unknown }

/** The default scenario with top-level parts replaced, parsed so every default applies. */
export function scenarioWith(patch: Patch = {}): Scenario {
  const parsed = parseScenario({ ...defaultScenario(), ...patch })
  if (!parsed.ok) throw new Error(`test scenario is not valid: ${JSON.stringify(parsed.issues)}`)
  return parsed.scenario
}

/** A regulated CO₂ supply at `setpointPsi`, the other fields at their defaults. */
export const co2Supply = (setpointPsi: number, extra: Record<string, unknown> = {}) => ({
  kind: 'co2',
  regulatorSetpointPa: psi(setpointPsi),
  ...extra,
})

/** A compressor and tank at `setpointPsi`, the other fields at their defaults. */
export const compressorSupply = (setpointPsi: number, extra: Record<string, unknown> = {}) => ({
  kind: 'compressor',
  regulatorSetpointPa: psi(setpointPsi),
  ...extra,
})

/** Every number of every series is finite. */
export function allFinite(series: Record<string, number[]>): boolean {
  return Object.values(series).every((column) => column.every(Number.isFinite))
}
