import type { BalanceResult, Scenario } from '@crackpoint/sim-core'
import { request } from './http'
import type { ResolvedAxis, Surface, SurfaceMetric, SweepState } from './types'

export type ShareTarget = 'scenario' | 'sweep'
export type ShareStatus = 'active' | 'expired' | 'revoked'

export interface ShareLink {
  id: string
  target: ShareTarget
  targetId: string
  targetName: string
  label: string
  status: ShareStatus
  createdBy: string | null
  createdAt: string
  expiresAt: string
  revokedAt: string | null
  lastUsedAt: string | null
  useCount: number
}

export interface CreatedShareLink {
  shareLink: ShareLink
  /** Shown this once; the server keeps only its hash. */
  token: string
  url: string
}

export interface SharedView {
  share: { target: ShareTarget; label: string; workspaceName: string; expiresAt: string }
  scenario: { name: string; updatedAt: string; data: Scenario; balance: BalanceResult | null } | null
  sweep: {
    scenarioName: string
    level: 'static' | 'dynamic' | 'both'
    state: SweepState
    axes: ResolvedAxis[]
    pointCount: number
    pointsDone: number
    pointsFailed: number
    createdAt: string
    finishedAt: string | null
  } | null
}

const enc = encodeURIComponent

/** Share links of the workspace (admins, engineers, analysts) and what a link's holder sees. */
export const sharingApi = {
  create(input: { target: ShareTarget; targetId: string; label: string; expiresInDays: number }): Promise<CreatedShareLink> {
    return request('/api/share-links', { method: 'POST', body: input })
  },
  list(target: ShareTarget, targetId: string): Promise<{ items: ShareLink[] }> {
    return request('/api/share-links', { query: { target, targetId } })
  },
  revoke(id: string): Promise<void> {
    return request(`/api/share-links/${enc(id)}`, { method: 'DELETE' })
  },
  send(id: string, token: string, email: string, note: string): Promise<{ sentTo: string }> {
    return request(`/api/share-links/${enc(id)}/send`, { method: 'POST', body: { token, email, note } })
  },
  open(token: string): Promise<SharedView> {
    return request(`/api/shared/${enc(token)}`)
  },
  surface(token: string, metric: SurfaceMetric, x: number, y: number): Promise<Surface> {
    return request(`/api/shared/${enc(token)}/surface`, { query: { metric, x, y } })
  },
}
