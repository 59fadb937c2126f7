import { request } from './http'

/** The sweep queue as a whole (every workspace's chunks) and the workers connected to it. */
export interface QueueCounts {
  waiting: number
  active: number
  delayed: number
  failed: number
  workers: number
}

export interface QueueHealth {
  /** null when the API could not reach the queue. */
  queue: QueueCounts | null
  /** This workspace's sweeps not finished yet. */
  sweeps: { queued: number; running: number }
  /** Age in seconds of this workspace's oldest chunk not done; null when none. */
  oldestOpenChunkSeconds: number | null
  checkedAt: string
}

export const queueHealthApi = {
  get(signal?: AbortSignal): Promise<{ queueHealth: QueueHealth }> {
    return request('/api/queue-health', { signal })
  },
}
