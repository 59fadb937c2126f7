import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import type { PullResult, Scenario } from '@crackpoint/sim-core'
import { deepEqual } from '@/composables/deep-equal'
import { createPullClient, PullCancelled, type PullClient } from '@/workers/pull-client'

/**
 * One dynamic pull of the open scenario, computed in the browser in a worker. The result keeps the
 * scenario it was run for, so the panel can say when the draft has moved on since.
 */
export const usePullStore = defineStore('pull', () => {
  const result = shallowRef<PullResult | null>(null)
  const ranFor = shallowRef<Scenario | null>(null)
  const elapsedMs = ref<number | null>(null)
  const running = ref(false)
  const error = ref<string | null>(null)
  /** Run again after each edit (debounced by the panel). */
  const auto = ref(true)
  let client: PullClient | null = null

  function isFor(scenario: Scenario | null): boolean {
    return scenario !== null && ranFor.value !== null && deepEqual(scenario, ranFor.value)
  }

  async function run(scenario: Scenario): Promise<void> {
    client ??= createPullClient()
    running.value = true
    error.value = null
    try {
      const answer = await client.run(scenario)
      result.value = answer.result
      ranFor.value = scenario
      elapsedMs.value = answer.elapsedMs
      running.value = false
    } catch (cause) {
      // A newer run replaced this one; that run reports for itself.
      if (cause instanceof PullCancelled) return
      error.value = cause instanceof Error ? cause.message : 'The pull could not be run.'
      running.value = false
    }
  }

  function cancel(): void {
    client?.cancel()
    running.value = false
  }

  function reset(): void {
    cancel()
    result.value = null
    ranFor.value = null
    elapsedMs.value = null
    error.value = null
  }

  const hasResult = computed(() => result.value !== null)

  return { result, ranFor, elapsedMs, running, error, auto, hasResult, isFor, run, cancel, reset }
})
