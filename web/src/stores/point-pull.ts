import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { pointAt, type PullResult, type Scenario, type SweepPoint } from '@crackpoint/sim-core'
import type { ResolvedAxis } from '@/api/types'
import { createPullClient, PullCancelled, type PullClient } from '@/workers/pull-client'

/**
 * One point of a sweep opened as a whole pull: sim-core's pointAt rebuilds the point's scenario from the
 * sweep's scenario and axes, and the pull runs in the browser's pull worker, so opening it costs the server
 * nothing. A click on another point replaces the run still going.
 */
export const usePointPullStore = defineStore('point-pull', () => {
  const point = shallowRef<SweepPoint | null>(null)
  const result = shallowRef<PullResult | null>(null)
  const running = ref(false)
  const error = ref<string | null>(null)
  let client: PullClient | null = null

  async function open(scenario: Scenario, axes: readonly ResolvedAxis[], index: number): Promise<void> {
    client ??= createPullClient()
    error.value = null
    result.value = null
    let picked: SweepPoint
    try {
      picked = pointAt(scenario, axes, index)
    } catch (cause) {
      point.value = null
      error.value = cause instanceof Error ? cause.message : 'That point is not part of the sweep.'
      return
    }
    point.value = picked
    running.value = true
    try {
      const answer = await client.run(picked.scenario)
      if (point.value !== picked) return
      result.value = answer.result
      running.value = false
    } catch (cause) {
      if (cause instanceof PullCancelled) return
      error.value = cause instanceof Error ? cause.message : 'The pull could not be run.'
      running.value = false
    }
  }

  function close(): void {
    client?.cancel()
    running.value = false
    point.value = null
    result.value = null
    error.value = null
  }

  return { point, result, running, error, open, close }
})
