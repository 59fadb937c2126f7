import type { Quantity } from '@crackpoint/sim-core'

export interface NumberField {
  /** Dotted path into the scenario, as sim-core's issues name it. */
  path: string
  quantity: Quantity
  label: string
  hint?: string
  suffix?: string
}

/** What each scenario path is called on screen and measured in, for labels, sweep axes and messages. */
export const FIELD_LABELS: Readonly<Record<string, { label: string; quantity: Quantity }>> = {
  'wastegate.valveDiameterM': { label: 'Valve diameter', quantity: 'length' },
  'wastegate.shaftDiameterM': { label: 'Shaft diameter', quantity: 'length' },
  'wastegate.actuatorDiameterM': { label: 'Actuator diameter', quantity: 'length' },
  'wastegate.maxLiftM': { label: 'Full lift', quantity: 'length' },
  'springs.0.seatForceN': { label: 'Spring seat force', quantity: 'force' },
  'springs.0.benchCrackPressurePa': { label: 'Bench crack pressure', quantity: 'pressure' },
  'springs.0.rateNPerM': { label: 'Spring rate', quantity: 'springRate' },
  'supply.regulatorSetpointPa': { label: 'Supply setpoint', quantity: 'pressure' },
  'exhaust.ratio': { label: 'Drive-to-boost ratio', quantity: 'ratio' },
}

const BOUND = /(at least|at most|greater than) (-?\d+(?:\.\d+)?(?:e[+-]?\d+)?)/

/**
 * sim-core words its limits in SI ("must be at most 0.1"); the user reads them in their own units, and
 * another field is named by its label rather than its path.
 */
export function displayIssue(
  message: string,
  quantity: Quantity,
  format: (quantity: Quantity, si: number) => string,
): string {
  let text = message.replace(BOUND, (_, bound: string, value: string) => `${bound} ${format(quantity, Number(value))}`)
  for (const [path, { label }] of Object.entries(FIELD_LABELS)) {
    text = text.split(path).join(`the ${label.toLowerCase()}`)
  }
  return text
}
