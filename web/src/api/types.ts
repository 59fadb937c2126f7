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

export type SurfaceMetric = 'crackBoostPa' | 'fullOpenBoostPa'

export interface Surface {
  metric: SurfaceMetric
  x: ResolvedAxis
  y: ResolvedAxis
  /** z[iy][ix]; null where the point has no value (never opens, failed, not done). */
  z: (number | null)[][]
}
