import type { Scenario } from '@crackpoint/sim-core'

export type Role = 'admin' | 'engineer' | 'builder' | 'analyst'
export type UnitSystem = 'us' | 'metric'

export interface User {
  id: string
  email: string
  displayName: string
  role: Role
  unitSystem: UnitSystem
  workspace: { id: string; name: string }
}

export interface ScenarioRow {
  id: string
  name: string
  data: Scenario
  version: number
  ownerId: string | null
  createdAt: string
  updatedAt: string
}

export interface ListResult<T> {
  items: T[]
  total: number
}

export type SweepState = 'queued' | 'running' | 'done' | 'failed' | 'cancelled'

export interface SweepAxisRequest {
  path: string
  values?: number[]
  range?: { from: number; to: number; count: number }
}

export interface ResolvedAxis {
  path: string
  values: number[]
}

export interface Sweep {
  id: string
  scenarioId: string
  state: SweepState
  level: 'static' | 'dynamic' | 'both'
  axes: ResolvedAxis[]
  pointCount: number
  pointsDone: number
  pointsFailed: number
  createdAt: string
  startedAt: string | null
  finishedAt: string | null
}

export type SweepLevel = Sweep['level']

/** The static level's metrics. */
export type StaticMetric = 'crackBoostPa' | 'fullOpenBoostPa'

/** A dynamic pull's metrics (MODEL.md §5); the flags read 1 (set) or 0 on a surface. */
export type DynamicMetric =
  | 'dynamicCrackBoostPa'
  | 'peakBoostPa'
  | 'settledBoostPa'
  | 'staticBoostAtSettledLiftPa'
  | 'overshootPa'
  | 'timeTo90PercentS'
  | 'creepPa'
  | 'peakDrivePa'
  | 'driveRatioSeen'
  | 'maxLiftFraction'
  | 'gasUsedPerPullKg'
  | 'pullsPerSupply'
  | 'overBoostLimit'
  | 'heldOpenByDrive'
  | 'supplyBelowSetpoint'
  | 'pastZeroFlowLine'
  | 'notSettled'

export type SurfaceMetric = StaticMetric | DynamicMetric

export interface Surface {
  metric: SurfaceMetric
  x: ResolvedAxis
  y: ResolvedAxis
  /** z[iy][ix]; null where the point has no value (never opens, failed, not done). */
  z: (number | null)[][]
}

/** What a sweep would cost before it is started (`POST /api/sweeps/estimate`). */
export interface SweepEstimate {
  pointCount: number
  computeUnits: number
  /** Units left this month: of the member's own limit (null when they have none) and of the workspace's. */
  remaining: { member: number | null; workspace: number }
}
