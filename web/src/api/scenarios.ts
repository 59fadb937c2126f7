import type { Scenario } from '@crackpoint/sim-core'
import { request } from './http'
import type { ListResult, ScenarioRow } from './types'

export const scenariosApi = {
  list(): Promise<ListResult<ScenarioRow>> {
    return request('/api/scenarios')
  },
  get(id: string): Promise<{ scenario: ScenarioRow }> {
    return request(`/api/scenarios/${encodeURIComponent(id)}`)
  },
  create(name: string, data?: Scenario): Promise<{ scenario: ScenarioRow }> {
    return request('/api/scenarios', { method: 'POST', body: data === undefined ? { name } : { name, data } })
  },
  /** A copy the caller owns, at version 1 (`POST /api/scenarios/:id/clone`). */
  clone(id: string): Promise<{ scenario: ScenarioRow }> {
    return request(`/api/scenarios/${encodeURIComponent(id)}/clone`, { method: 'POST', body: {} })
  },
  update(id: string, patch: { name?: string; data?: Scenario; version: number }): Promise<{ scenario: ScenarioRow }> {
    return request(`/api/scenarios/${encodeURIComponent(id)}`, { method: 'PATCH', body: patch })
  },
}
