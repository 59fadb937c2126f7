import { downloadFile, type DownloadedFile } from './download'
import { readEventStream } from './event-stream'
import { request } from './http'
import type { ServerSentEvent } from './sse-parser'
import type { ListResult, Surface, SurfaceMetric, Sweep, SweepAxisRequest, SweepDetail, SweepEstimate, SweepLevel, SweepPointPage, PointSort, PointStatus, UnitSystem } from './types'

const sweepPath = (id: string) => `/api/sweeps/${encodeURIComponent(id)}`

export interface SurfaceQuery {
  metric: SurfaceMetric
  x: number
  y: number
  /** For a three-axis sweep: the value (SI) of the remaining axis the surface is cut at. */
  at?: number
}

export interface PointsQuery {
  offset: number
  limit: number
  sort: PointSort
  order: 'asc' | 'desc'
  /** Only points with one of these results; none or empty: every point. */
  status?: readonly PointStatus[]
  /** Only points whose metric lies from `from` to `to` (SI, inclusive). */
  range?: PointRange
}

/** A metric's range that keeps a point (a sweep that answers a target: settled boost between A and B). */
export interface PointRange {
  between: SurfaceMetric
  from: number
  to: number
}

export const sweepsApi = {
  create(scenarioId: string, level: SweepLevel, axes: SweepAxisRequest[]): Promise<{ sweep: Sweep }> {
    return request('/api/sweeps', { method: 'POST', body: { scenarioId, level, axes } })
  },
  /** What the sweep would cost and what is left this month; nothing is created or reserved. */
  estimate(scenarioId: string, level: SweepLevel, axes: SweepAxisRequest[], signal?: AbortSignal): Promise<{ estimate: SweepEstimate }> {
    return request('/api/sweeps/estimate', { method: 'POST', body: { scenarioId, level, axes }, signal })
  },
  /** The sweep with its scenarioSnapshot, which lists leave out. */
  get(id: string, signal?: AbortSignal): Promise<{ sweep: SweepDetail }> {
    return request(sweepPath(id), { signal })
  },
  /** The sweep's progress as server-sent events until it reaches a final state. */
  events(id: string, onEvent: (event: ServerSentEvent) => void, signal?: AbortSignal): Promise<void> {
    return readEventStream(`${sweepPath(id)}/events`, onEvent, signal)
  },
  cancel(id: string): Promise<{ sweep: Sweep }> {
    return request(`${sweepPath(id)}/cancel`, { method: 'POST' })
  },
  listForScenario(scenarioId: string): Promise<ListResult<Sweep>> {
    return request('/api/sweeps', { query: { scenarioId } })
  },
  /** One page of the sweep's stored points. */
  points(id: string, query: PointsQuery, signal?: AbortSignal): Promise<SweepPointPage> {
    const { status, range, ...rest } = query
    return request(`${sweepPath(id)}/points`, { query: { ...rest, ...(range ?? {}), status: status?.length ? status.join(',') : undefined }, signal })
  },
  /** Every point as CSV in the given units (only those in `range` when given). */
  pointsCsv(id: string, units: UnitSystem, range?: PointRange): Promise<DownloadedFile> {
    const query: Record<string, string> = { units }
    if (range) Object.assign(query, { between: range.between, from: String(range.from), to: String(range.to) })
    return downloadFile(`${sweepPath(id)}/points.csv`, query, `sweep-${id}.csv`)
  },
  surface(id: string, query: SurfaceQuery, signal?: AbortSignal): Promise<Surface> {
    return request(`${sweepPath(id)}/surface`, { query: { ...query }, signal })
  },
}
