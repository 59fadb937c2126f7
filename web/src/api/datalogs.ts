import type { PullFitReport } from '@crackpoint/sim-core'
import { request } from './http'
import type { ListResult, ScenarioRow } from './types'

export const DATALOG_QUANTITIES = ['time', 'boost', 'rpm', 'drive', 'duty', 'supply'] as const
export type DatalogQuantity = (typeof DATALOG_QUANTITIES)[number]

export interface ColumnChoice {
  column: string
  unit: string
}
export type DatalogMapping = { time: ColumnChoice; boost: ColumnChoice } & { [Q in Exclude<DatalogQuantity, 'time' | 'boost'>]: ColumnChoice | null }

export interface DatalogRow {
  id: string
  filename: string
  byteSize: number
  sha256: string
  rowCount: number
  uploadedBy: string | null
  columns: string[]
  mapping: DatalogMapping
  mappingConfirmed: boolean
  detectionNotes: Partial<Record<DatalogQuantity, string>>
  durationS: number
  peakBoostPa: number
  createdAt: string
  updatedAt: string
}

/** SI: time from the first row (s), pressures gauge (Pa), duty 0–1; null where the log has no such column. */
export interface DatalogSeries {
  timeS: number[]
  boostPa: number[]
  rpm: number[] | null
  drivePa: number[] | null
  duty: number[] | null
  supplyPa: number[] | null
}

export interface DatalogOverlay {
  scenarioId: string
  scenarioVersion: number
  measured: DatalogSeries
  simulated: { timeS: number[]; boostPa: number[]; drivePa: number[] }
  rmsBoostDifferencePa: number
  pointsCompared: number
  notes: string[]
}

export interface DatalogFit {
  fit: PullFitReport
  /** The fitted copy of the scenario; null when the fit was poor and nothing was written. */
  scenario: ScenarioRow | null
}

const path = (id: string) => `/api/datalogs/${encodeURIComponent(id)}`

export const datalogsApi = {
  list(): Promise<ListResult<DatalogRow>> {
    return request('/api/datalogs', { query: { limit: 200 } })
  },
  get(id: string): Promise<{ datalog: DatalogRow; series: DatalogSeries }> {
    return request(path(id))
  },
  upload(file: File): Promise<{ datalog: DatalogRow }> {
    const form = new FormData()
    form.append('file', file, file.name)
    return request('/api/datalogs', { method: 'POST', body: form })
  },
  saveMapping(id: string, mapping: DatalogMapping): Promise<{ datalog: DatalogRow; series: DatalogSeries }> {
    return request(`${path(id)}/mapping`, { method: 'PUT', body: mapping })
  },
  remove(id: string): Promise<void> {
    return request(path(id), { method: 'DELETE' })
  },
  overlay(id: string, scenarioId: string): Promise<{ overlay: DatalogOverlay }> {
    return request(`${path(id)}/overlay`, { method: 'POST', body: { scenarioId } })
  },
  fit(id: string, scenarioId: string): Promise<DatalogFit> {
    return request(`${path(id)}/fit`, { method: 'POST', body: { scenarioId } })
  },
}

/** The units each quantity may be logged in, as the API takes them. */
const PRESSURE_UNITS = ['psi', 'kPa', 'bar', 'psi-abs', 'kPa-abs', 'bar-abs']
export const DATALOG_UNITS: Record<DatalogQuantity, string[]> = {
  time: ['s', 'ms'],
  rpm: ['rpm'],
  boost: PRESSURE_UNITS,
  drive: PRESSURE_UNITS,
  duty: ['%', 'fraction'],
  supply: PRESSURE_UNITS,
}
