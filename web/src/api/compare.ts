import { request } from './http'
import type { ListResult, Surface, SurfaceMetric, Sweep } from './types'

/** What the compare page reads: the workspace's sweeps, and a surface of each sweep to subtract. */
export const compareApi = {
  sweeps(): Promise<ListResult<Sweep>> {
    return request('/api/sweeps', { query: { limit: 200 } })
  },
  surface(id: string, metric: SurfaceMetric): Promise<Surface> {
    return request(`/api/sweeps/${encodeURIComponent(id)}/surface`, { query: { metric, x: 0, y: 1 } })
  },
}
