import { request } from './http'
import type { Role } from './types'

/** Compute units of one member or the workspace in one month (see the API's "What a sweep costs"). */
export interface OwnUsage {
  userId: string
  /** The member's own monthly limit; null when only the workspace's limits them. */
  quota: number | null
  spent: number
  reserved: number
  /** What the member can still use: the smaller of their own and the workspace's remaining. */
  remaining: number
}

export interface WorkspaceUsage {
  quota: number
  quotaIsDefault: boolean
  purchased: number
  granted: number
  spent: number
  reserved: number
  remaining: number
}

export interface MemberUsage {
  userId: string
  displayName: string
  email: string
  role: Role
  quota: number | null
  granted: number
  spent: number
  reserved: number
  remaining: number | null
}

export interface Usage {
  /** YYYY-MM (UTC). */
  month: string
  /** From the first ledger entry to now, newest first. */
  months: string[]
  own: OwnUsage
  /** Admins only; null for other roles. */
  workspace: WorkspaceUsage | null
  members: MemberUsage[] | null
}

export interface Quotas {
  workspace: { monthlyComputeUnits: number; isDefault: boolean; updatedAt: string | null }
  members: { userId: string; displayName: string; email: string; role: Role; monthlyComputeUnits: number | null }[]
}

export interface SweepEstimate {
  pointCount: number
  computeUnits: number
  remaining: { member: number | null; workspace: number }
}

export const usageApi = {
  get(month?: string, signal?: AbortSignal): Promise<{ usage: Usage }> {
    return request('/api/usage', { query: { month }, signal })
  },
  quotas(): Promise<{ quotas: Quotas }> {
    return request('/api/quotas')
  },
  setWorkspaceQuota(monthlyComputeUnits: number): Promise<{ quotas: Quotas }> {
    return request('/api/quotas/workspace', { method: 'PUT', body: { monthlyComputeUnits } })
  },
  /** null removes the member's own limit. */
  setMemberQuota(userId: string, monthlyComputeUnits: number | null): Promise<{ quotas: Quotas }> {
    return request(`/api/quotas/members/${encodeURIComponent(userId)}`, { method: 'PUT', body: { monthlyComputeUnits } })
  },
  /** What a sweep would cost, with the same body as creating it; nothing is reserved. */
  estimateSweep(body: { scenarioId: string; level: string; axes: unknown[] }): Promise<{ estimate: SweepEstimate }> {
    return request('/api/sweeps/estimate', { method: 'POST', body })
  },
}
