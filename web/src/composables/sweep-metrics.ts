import type { DynamicMetric, StaticMetric, SurfaceMetric, SweepLevel } from '@/api/types'
import type { FieldQuantity } from './field-units'

export interface SweepMetric {
  key: SurfaceMetric
  label: string
  quantity: FieldQuantity
  /** Stored as a yes/no: a surface reads 1 where it is set. */
  flag?: boolean
}

const STATIC: readonly (SweepMetric & { key: StaticMetric })[] = [
  { key: 'crackBoostPa', label: 'Crack boost', quantity: 'pressure' },
  { key: 'fullOpenBoostPa', label: 'Full-open boost', quantity: 'pressure' },
]

const DYNAMIC: readonly (SweepMetric & { key: DynamicMetric })[] = [
  { key: 'settledBoostPa', label: 'Settled boost', quantity: 'pressure' },
  { key: 'peakBoostPa', label: 'Peak boost', quantity: 'pressure' },
  { key: 'overshootPa', label: 'Overshoot', quantity: 'pressure' },
  { key: 'dynamicCrackBoostPa', label: 'Crack boost in the pull', quantity: 'pressure' },
  { key: 'staticBoostAtSettledLiftPa', label: 'Static balance at the settled lift', quantity: 'pressure' },
  { key: 'timeTo90PercentS', label: 'Time to 90 % of settled boost', quantity: 'time' },
  { key: 'creepPa', label: 'Creep at full lift', quantity: 'pressure' },
  { key: 'peakDrivePa', label: 'Peak drive pressure', quantity: 'pressure' },
  { key: 'driveRatioSeen', label: 'Drive-to-boost ratio seen', quantity: 'ratio' },
  { key: 'maxLiftFraction', label: 'Largest lift', quantity: 'percent' },
  { key: 'gasUsedPerPullKg', label: 'Gas per pull', quantity: 'gasMass' },
  { key: 'pullsPerSupply', label: 'Pulls per bottle or tank', quantity: 'plain' },
  { key: 'sessionGasKg', label: 'Gas for the planned session', quantity: 'gasMass' },
  { key: 'armedGasKgPerS', label: 'Gas passed while armed', quantity: 'massFlow' },
  { key: 'boostSwingPa', label: 'Boost swing after the crack', quantity: 'pressure' },
  { key: 'overBoostLimit', label: 'Over the boost limit', quantity: 'plain', flag: true },
  { key: 'heldOpenByDrive', label: 'Held open by drive pressure', quantity: 'plain', flag: true },
  { key: 'supplyBelowSetpoint', label: 'Supply below the setpoint', quantity: 'plain', flag: true },
  { key: 'pastZeroFlowLine', label: 'Past the zero-flow line', quantity: 'plain', flag: true },
  { key: 'notSettled', label: 'Boost never settled', quantity: 'plain', flag: true },
  { key: 'hunting', label: 'Boost hunts', quantity: 'plain', flag: true },
  { key: 'portLag', label: 'Port lag', quantity: 'plain', flag: true },
  { key: 'targetUnreachable', label: 'Target out of reach', quantity: 'plain', flag: true },
]

/** The stored metrics a sweep of `level` has, in the order a picker lists them. */
export function metricsFor(level: SweepLevel): readonly SweepMetric[] {
  if (level === 'static') return STATIC
  if (level === 'dynamic') return DYNAMIC
  return [...STATIC, ...DYNAMIC]
}

export function describeMetric(key: SurfaceMetric): SweepMetric {
  const found = STATIC.find((m) => m.key === key) ?? DYNAMIC.find((m) => m.key === key)
  if (!found) throw new Error(`no label for sweep metric ${key}`)
  return found
}
