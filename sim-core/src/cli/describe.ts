import type { BoostOutcome } from '../balance.ts'
import type { Scenario } from '../scenario.ts'
import { formatQuantity, type UnitSystem } from '../units.ts'

export const CAUTION =
  'Caution: boost, hot exhaust parts and high-pressure CO₂ or air can hurt people and engines. These are model ' +
  "estimates: the hardware makers' limits, local codes, sanctioning-body rules and licensed practice come first."

const percent = (x: number) => `${Math.round(x * 100)} %`

/** The port arrangement in words. */
export function describeControl(s: Scenario, system: UnitSystem): string {
  const c = s.control
  switch (c.kind) {
    case 'none':
      return 'both ports open to the air (drive pressure alone opens the valve)'
    case 'bottom-boost':
      return 'bottom port on boost'
    case 'top-supply':
      return 'top port on the supply, bottom port open'
    case 'both':
      return 'bottom port on boost, top port on the supply'
    case 'bleed-top':
      return `a bleed sends ${percent(c.fraction)} of boost to the top port${c.bottomOnBoost ? ', bottom port on boost' : ''}`
    case 'solenoid-3port':
      return `three-port solenoid on the ${c.chamber} chamber at ${percent(c.duty)} duty`
    case 'solenoid-4port':
      return `four-port solenoid at ${percent(c.duty)} duty`
    case 'closed-loop':
      return (
        `top port on the supply through a solenoid in closed loop on ${formatQuantity('pressure', system, c.targetBoostPa)}` +
        ` (the static level is taken at the floor duty, ${percent(c.dutyMin)})`
      )
  }
}

/** The supply in words. */
export function describeSupply(s: Scenario, system: UnitSystem): string {
  const p = s.supply
  switch (p.kind) {
    case 'boost':
      return 'boost itself'
    case 'co2':
      return (
        `CO₂ bottle of ${formatQuantity('volume', system, p.bottleVolumeM3)} holding ${formatQuantity('mass', system, p.fillMassKg)}` +
        ` at ${formatQuantity('temperature', system, p.bottleTemperatureK)}, regulator set to ` +
        formatQuantity('pressure', system, p.regulatorSetpointPa)
      )
    case 'compressor':
      return (
        `compressor and ${formatQuantity('volume', system, p.tankVolumeM3)} tank, cut-in ` +
        `${formatQuantity('pressure', system, p.cutInPa)}, cut-out ${formatQuantity('pressure', system, p.cutOutPa)}, ` +
        `regulator set to ${formatQuantity('pressure', system, p.regulatorSetpointPa)}`
      )
  }
}

export function describeDownstream(s: Scenario): string {
  const d = s.exhaust.downstream
  if (d.kind === 'vented') return 'vented to the air'
  if (d.kind === 'recirculated') return 'recirculated into the exhaust after the turbine'
  return 'restricted (muffled) dump'
}

/** A boost outcome for a table cell. */
export function formatOutcome(o: BoostOutcome, system: UnitSystem): string {
  if (o.status === 'opens') return formatQuantity('pressure', system, o.boostPa)
  if (o.status === 'never-opens') return 'never opens'
  return 'open at zero boost'
}
