import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import type { QueueHealth } from '@/api/queue-health'
import QueueHealthPanel from '@/components/QueueHealthPanel.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
})

function health(overrides: Partial<QueueHealth> = {}): QueueHealth {
  return {
    queue: { waiting: 0, active: 3, delayed: 1, failed: 0, workers: 2 },
    sweeps: { queued: 1, running: 1 },
    oldestOpenChunkSeconds: 754,
    checkedAt: '2026-12-02T02:40:05.000Z',
    ...overrides,
  }
}

async function panelWith(answer: () => [number, unknown]) {
  const { fetchStub, requests } = routeFetch({ 'GET /api/queue-health': answer })
  vi.stubGlobal('fetch', fetchStub)
  const { wrapper } = await mountApp(QueueHealthPanel)
  await flushPromises()
  return { wrapper, requests }
}

const text = (wrapper: Awaited<ReturnType<typeof panelWith>>['wrapper'], id: string) => wrapper.find(`[data-testid="${id}"]`).text()

describe('QueueHealthPanel', () => {
  it('says in plain words how many workers are connected, what waits and how old the oldest chunk is', async () => {
    const { wrapper } = await panelWith(() => [200, { queueHealth: health() }])
    expect(text(wrapper, 'queue-health-queue')).toBe('2 workers connected, 0 waiting, 3 running, 1 retrying later, 0 failed.')
    expect(text(wrapper, 'queue-health-workspace')).toBe('This workspace: 1 sweep queued, 1 running. The oldest unfinished chunk was queued 12 minutes ago.')
    expect(wrapper.find('[data-testid="queue-health-no-workers"]').exists()).toBe(false)
  })

  it('warns when work waits and no worker is connected, and reads again on Refresh', async () => {
    let workers = 0
    const { wrapper, requests } = await panelWith(() => [
      200,
      { queueHealth: health({ queue: { waiting: 4, active: 0, delayed: 0, failed: 0, workers }, oldestOpenChunkSeconds: 3 * 3600 + 60 }) },
    ])
    expect(text(wrapper, 'queue-health-queue')).toBe('0 workers connected, 4 waiting, 0 running, 0 retrying later, 0 failed.')
    expect(text(wrapper, 'queue-health-workspace')).toContain('queued 3 hours 1 minute ago')
    expect(text(wrapper, 'queue-health-no-workers')).toContain('No worker is connected')

    workers = 1
    await wrapper.find('[data-testid="queue-health-refresh"]').trigger('click')
    await flushPromises()
    expect(requests.map((r) => r.key)).toEqual(['GET /api/queue-health', 'GET /api/queue-health'])
    expect(text(wrapper, 'queue-health-queue')).toMatch(/^1 worker connected/)
    expect(wrapper.find('[data-testid="queue-health-no-workers"]').exists()).toBe(false)
  })

  it('says when the queue does not answer, and shows an error from the API', async () => {
    const { wrapper } = await panelWith(() => [200, { queueHealth: health({ queue: null, sweeps: { queued: 0, running: 0 }, oldestOpenChunkSeconds: null }) }])
    expect(text(wrapper, 'queue-health-queue')).toContain('The queue did not answer')
    expect(text(wrapper, 'queue-health-workspace')).toBe('This workspace: 0 sweeps queued, 0 running. Nothing is waiting.')

    const failed = await panelWith(() => [403, { error: { code: 'forbidden', message: 'Only admins can see the queue.' } }])
    expect(text(failed.wrapper, 'queue-health-error')).toBe('Only admins can see the queue.')
  })
})
