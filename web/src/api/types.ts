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
  /** The member who started it (null once they have left); builders cancel only their own. */
  createdBy: string | null
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

/** One sweep as GET /api/sweeps/:id gives it, with the scenario its points were computed from. */
export interface SweepDetail extends Sweep {
  /** null: the current model no longer accepts the copy the sweep took. */
  scenarioSnapshot: Scenario | null
}

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
  | 'boostSwingPa'
  | 'armedGasKgPerS'
  | 'sessionGasKg'
  | 'overBoostLimit'
  | 'heldOpenByDrive'
  | 'supplyBelowSetpoint'
  | 'pastZeroFlowLine'
  | 'notSettled'
  | 'hunting'
  | 'portLag'
  | 'targetUnreachable'

export type SurfaceMetric = StaticMetric | DynamicMetric

export interface Surface {
  metric: SurfaceMetric
  x: ResolvedAxis
  y: ResolvedAxis
  /** z[iy][ix]; null where the point has no value (never opens, failed, not done). */
  z: (number | null)[][]
  /** Where a three-axis sweep was cut: the remaining axis and its listed value used; null for two axes. */
  slice: { axis: number; path: string; index: number; value: number; requested: number | null } | null
}

/** What a sweep would cost before it is started (`POST /api/sweeps/estimate`). */
export interface SweepEstimate {
  pointCount: number
  computeUnits: number
  /** Units left this month: of the member's own limit (null when they have none) and of the workspace's. */
  remaining: { member: number | null; workspace: number }
}

export type PointStatus = 'ok' | 'never-opens' | 'open-at-zero-boost' | 'failed'

/** A sort key of the points table: the index, an axis by its number, or a stored metric. */
export type PointSort = 'index' | 'axis0' | 'axis1' | 'axis2' | SurfaceMetric

/** One stored point of a sweep; numbers SI, flags true or false, null where not computed. */
export interface SweepPointRow {
  index: number
  /** The point's value of each axis, by the axis's path. */
  coordinates: Record<string, number>
  status: PointStatus
  dynamicStatus: PointStatus | null
  error: string | null
  metrics: Partial<Record<SurfaceMetric, number | boolean | null>>
}

export interface SweepPointPage {
  items: SweepPointRow[]
  total: number
  offset: number
  limit: number
  sort: PointSort
  order: 'asc' | 'desc'
}
