import { request } from './http'
import type { ListResult, Surface, SurfaceMetric, Sweep, SweepAxisRequest } from './types'

export const sweepsApi = {
  create(scenarioId: string, axes: SweepAxisRequest[]): Promise<{ sweep: Sweep }> {
    return request('/api/sweeps', { method: 'POST', body: { scenarioId, level: 'static', axes } })
  },
  get(id: string, signal?: AbortSignal): Promise<{ sweep: Sweep }> {
    return request(`/api/sweeps/${encodeURIComponent(id)}`, { signal })
  },
  listForScenario(scenarioId: string): Promise<ListResult<Sweep>> {
    return request('/api/sweeps', { query: { scenarioId } })
  },
  surface(id: string, metric: SurfaceMetric, x: number, y: number): Promise<Surface> {
    return request(`/api/sweeps/${encodeURIComponent(id)}/surface`, { query: { metric, x, y } })
  },
}
