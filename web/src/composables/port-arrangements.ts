import type { Control, Scenario, ScenarioInput } from '@crackpoint/sim-core'

export type ArrangementKind = Control['kind']

export interface ArrangementChoice {
  value: ArrangementKind
  title: string
  subtitle: string
}

/** Every port arrangement sim-core models, in the words the editor and the setup sheet use. */
export const ARRANGEMENTS: readonly ArrangementChoice[] = [
  { value: 'none', title: 'Nothing connected', subtitle: 'Both ports open to the air; only drive pressure opens the valve' },
  { value: 'bottom-boost', title: 'Bottom port on boost', subtitle: 'Boost under the actuator helps open the valve' },
  { value: 'top-supply', title: 'Top port on a regulated supply', subtitle: 'Supply pressure above the actuator holds it shut' },
  { value: 'both', title: 'Both ports', subtitle: 'Boost on the bottom port, regulated supply on the top' },
  { value: 'bleed-top', title: 'Bleed to the top port', subtitle: 'A share of boost reaches the top chamber and holds the valve shut longer' },
  { value: 'solenoid-3port', title: 'Three-port solenoid', subtitle: 'Feeds one chamber or vents it, by its duty' },
  { value: 'solenoid-4port', title: 'Four-port solenoid', subtitle: 'Trades boost on the bottom against supply on the top, by its duty' },
  { value: 'closed-loop', title: 'Closed loop on a boost target', subtitle: 'A controller pulses a solenoid on the top port to hold the target' },
]

export function arrangementTitle(kind: ArrangementKind): string {
  return ARRANGEMENTS.find((a) => a.value === kind)?.title ?? kind
}

type AnyScenario = Scenario | ScenarioInput

/** The top chamber is fed from the scenario's supply (boost itself, a bottle or a tank). */
export function topPortOnSupply(s: AnyScenario): boolean {
  const c = s.control
  switch (c.kind) {
    case 'top-supply':
    case 'both':
    case 'solenoid-4port':
    case 'closed-loop':
      return true
    case 'solenoid-3port':
      return c.chamber === 'top'
    default:
      return false
  }
}

/** High-pressure gas feeds the top port: a CO₂ bottle or a compressor's tank behind a regulator. */
export function gasOnTopPort(s: AnyScenario): boolean {
  return topPortOnSupply(s) && s.supply.kind !== 'boost'
}

export type PortFeed = 'air' | 'boost' | 'supply' | 'bleed' | 'solenoid-boost' | 'solenoid-supply'

/** What each chamber of the actuator is connected to, for the picture and the sheet. */
export function portFeeds(s: AnyScenario): { top: PortFeed; bottom: PortFeed } {
  const c = s.control
  switch (c.kind) {
    case 'none':
      return { top: 'air', bottom: 'air' }
    case 'bottom-boost':
      return { top: 'air', bottom: 'boost' }
    case 'top-supply':
      return { top: 'supply', bottom: 'air' }
    case 'both':
      return { top: 'supply', bottom: 'boost' }
    case 'bleed-top':
      return { top: 'bleed', bottom: c.bottomOnBoost === false ? 'air' : 'boost' }
    case 'solenoid-3port':
      return c.chamber === 'top' ? { top: 'solenoid-supply', bottom: 'air' } : { top: 'air', bottom: 'solenoid-boost' }
    case 'solenoid-4port':
      return { top: 'solenoid-supply', bottom: 'solenoid-boost' }
    case 'closed-loop':
      return { top: 'solenoid-supply', bottom: 'air' }
  }
}

export const SUPPLY_TITLES = {
  boost: 'Boost itself',
  co2: 'CO₂ bottle and regulator',
  compressor: 'Compressor, tank and regulator',
} as const
